package dev.afterglow.filters.synth;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

/**
 * A randomised scene for training learned reconstruction: a panorama of fractal texture, flat
 * shapes and optionally a very bright or very dark area, seen by a camera that pans in a random
 * direction at a random pace with holds ({@value #PAN_SHARE} of the seeds), spins steadily about a
 * point of the view ({@value #SPIN_SHARE}) or rolls and zooms back and forth with holds (the rest),
 * and up to four textured objects crossing it at random speeds (from a crawl to several image
 * widths per second). Every choice comes from the seed, so
 * a seed reproduces the scene bit for bit. Never used for the benchmark scenes' seeds: it is a
 * different scene family altogether. Immutable.
 */
public final class TrainingMixScene implements Scene {
    /** Name of the scene family. */
    public static final String NAME = "training-mix";
    /** Share of scenes whose camera pans. */
    static final double PAN_SHARE = 0.55;
    /** Share of scenes whose camera spins steadily about a point; the rest swing (roll and zoom). */
    static final double SPIN_SHARE = 0.15;

    private final int width;
    private final int height;
    private final CameraMotion camera;
    private final MovingSprite[] sprites;
    private final double maxSpeed;

    /**
     * @param width view width, at least 32
     * @param height view height, at least 24
     * @param seed every random choice
     */
    public TrainingMixScene(int width, int height, long seed) {
        if (width < 32 || height < 24) {
            throw new IllegalArgumentException("training-mix size " + width + "x" + height + " below 32x24");
        }
        this.width = width;
        this.height = height;
        SplittableRandom r = new SplittableRandom(seed);
        double level = r.nextDouble(-1.5, 1.0);
        double contrast = logUniform(r, 0.15, 1.5);
        double cell = logUniform(r, 3, 48);
        int octaves = 1 + r.nextInt(5);
        double gain = r.nextDouble(0.35, 0.75);
        int shapes = r.nextInt(12);
        int hdr = r.nextInt(4); // 0: a bright area, 1: a dark area, else none
        long moveUs = (long) (logUniform(r, 0.25, 4) * 1e6);
        long holdUs = r.nextDouble() < 0.3 ? 0 : (long) (r.nextDouble(0.1, 1.5) * 1e6);
        double motion = r.nextDouble();
        SplittableRandom paint = r.split();
        CameraMotion.Painter painter = (w, h) -> panorama(w, h, level, contrast, cell, octaves, gain, shapes, hdr, paint);
        if (motion < PAN_SHARE) {
            double maxTravel = 2.5 * width;
            double ax = r.nextDouble() < 0.25 ? 0 : r.nextDouble(0, maxTravel);
            double ay = r.nextDouble() < 0.5 ? 0 : r.nextDouble(0, maxTravel / 2);
            this.camera = new CameraPan(width, height, ax, ay, moveUs, holdUs, r.nextBoolean(), painter);
        } else {
            double pivotX = width * r.nextDouble(0.25, 0.75);
            double pivotY = height * r.nextDouble(0.25, 0.75);
            if (motion < PAN_SHARE + SPIN_SHARE) {
                double rate = logUniform(r, 0.2, 4) * (r.nextBoolean() ? 1 : -1);
                this.camera = CameraSwing.spin(width, height, pivotX, pivotY, rate, painter);
            } else {
                boolean zoom = r.nextDouble() < 0.5;
                boolean roll = !zoom || r.nextDouble() < 0.6;
                double peakTurn = roll ? logUniform(r, 0.1, 3) * (r.nextBoolean() ? 1 : -1) : 0;
                double angle = peakTurn * 2 * moveUs * 1e-6 / Math.PI;
                double logZoom = zoom ? r.nextDouble(0.1, 0.7) * (r.nextBoolean() ? 1 : -1) : 0;
                this.camera = CameraSwing.swing(width, height, pivotX, pivotY, angle, logZoom, moveUs, holdUs, painter);
            }
        }
        int count = r.nextInt(5);
        List<MovingSprite> list = new ArrayList<>();
        double fastest = camera.maxSpeedPxPerS();
        for (int i = 0; i < count; i++) {
            MovingSprite s = sprite(r.split(), level);
            list.add(s);
            fastest = Math.max(fastest, s.speed());
        }
        this.sprites = list.toArray(new MovingSprite[0]);
        this.maxSpeed = fastest;
    }

    private MovingSprite sprite(SplittableRandom r, double level) {
        int sw = Math.max(4, (int) (width * r.nextDouble(0.05, 0.4)));
        int sh = Math.max(4, (int) (height * r.nextDouble(0.05, 0.5)));
        float[] tex = Textures.fractal(sw, sh, logUniform(r, 2, 16), 1 + r.nextInt(3), 0.5, r.split());
        double base = level + r.nextDouble(-1.5, 1.5);
        double amp = logUniform(r, 0.05, 1.0);
        float[] log = new float[sw * sh];
        float[] alpha = new float[sw * sh];
        boolean disc = r.nextBoolean();
        for (int y = 0; y < sh; y++) {
            for (int x = 0; x < sw; x++) {
                int i = y * sw + x;
                log[i] = (float) (base + amp * tex[i]);
                if (disc) {
                    double dx = (x + 0.5) / sw * 2 - 1;
                    double dy = (y + 0.5) / sh * 2 - 1;
                    double d = Math.sqrt(dx * dx + dy * dy);
                    alpha[i] = (float) Textures.clamp((1 - d) * Math.min(sw, sh) / 2, 0, 1);
                } else {
                    alpha[i] = 1;
                }
            }
        }
        int top = r.nextInt(Math.max(1, height - sh / 2)) - sh / 4;
        double speed = logUniform(r, 10, 4 * width) * (r.nextBoolean() ? 1 : -1);
        double loop = width + sw + 4 + r.nextDouble(0, width);
        return new MovingSprite(sw, sh, log, alpha, top, r.nextDouble(-sw, width), speed, loop,
                new int[] {0, 0, width, height});
    }

    private static float[] panorama(int w, int h, double level, double contrast, double cell, int octaves,
            double gain, int shapes, int hdr, SplittableRandom r) {
        float[] tex = Textures.fractal(w, h, cell, octaves, gain, r.split());
        float[] out = new float[w * h];
        for (int i = 0; i < out.length; i++) {
            out[i] = (float) (level + contrast * tex[i]);
        }
        for (int s = 0; s < shapes; s++) {
            double cx = r.nextDouble(w);
            double cy = r.nextDouble(h);
            double rx = logUniform(r, 2, Math.max(3, w / 6.0));
            double ry = r.nextBoolean() ? rx : logUniform(r, 2, Math.max(3, h / 4.0));
            double value = level + r.nextDouble(-1.5, 1.5);
            boolean round = r.nextBoolean();
            double soft = r.nextDouble(0.5, 3);
            paint(out, w, h, cx, cy, rx, ry, round, soft, value, 1);
        }
        if (hdr < 2) {
            double cx = r.nextDouble(w);
            double cy = r.nextDouble(h);
            double rx = r.nextDouble(w / 20.0, w / 5.0);
            double ry = r.nextDouble(h / 10.0, h / 3.0);
            double delta = hdr == 0 ? r.nextDouble(2, 4.5) : -r.nextDouble(1.5, 3.5);
            paint(out, w, h, cx, cy, rx, ry, r.nextBoolean(), r.nextDouble(1, 8), delta, 0);
        }
        return out;
    }

    /**
     * Paints an ellipse or a rectangle with a soft edge: {@code mode} 1 blends towards
     * {@code value}, 0 adds {@code value} (a light or a shadow over the texture).
     */
    private static void paint(float[] out, int w, int h, double cx, double cy, double rx, double ry, boolean round,
            double soft, double value, int mode) {
        int x0 = (int) Math.max(0, Math.floor(cx - rx - soft));
        int x1 = (int) Math.min(w, Math.ceil(cx + rx + soft));
        int y0 = (int) Math.max(0, Math.floor(cy - ry - soft));
        int y1 = (int) Math.min(h, Math.ceil(cy + ry + soft));
        for (int y = y0; y < y1; y++) {
            for (int x = x0; x < x1; x++) {
                double dx = (x + 0.5 - cx) / rx;
                double dy = (y + 0.5 - cy) / ry;
                double outside = round ? (Math.sqrt(dx * dx + dy * dy) - 1) * Math.min(rx, ry)
                        : Math.max((Math.abs(dx) - 1) * rx, (Math.abs(dy) - 1) * ry);
                double a = Textures.clamp(0.5 - outside / soft, 0, 1);
                if (a > 0) {
                    int i = y * w + x;
                    out[i] = (float) (mode == 1 ? out[i] + a * (value - out[i]) : out[i] + a * value);
                }
            }
        }
    }

    private static double logUniform(SplittableRandom r, double lo, double hi) {
        return Math.exp(r.nextDouble(Math.log(lo), Math.log(hi)));
    }

    /** How the camera moves: 0 pans, 1 spins steadily, 2 rolls and zooms back and forth. */
    public int motionKind() {
        if (camera instanceof CameraSwing s) {
            return s.steady() ? 1 : 2;
        }
        return 0;
    }

    /** The camera's motion (for tests). */
    CameraMotion camera() {
        return camera;
    }

    @Override
    public String name() {
        return NAME;
    }

    @Override
    public int width() {
        return width;
    }

    @Override
    public int height() {
        return height;
    }

    @Override
    public double maxSpeedPxPerS() {
        return maxSpeed;
    }

    @Override
    public void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset) {
        camera.renderRow(timeUs, y, x0, x1, out, offset);
        for (MovingSprite s : sprites) {
            s.composite(timeUs, y, x0, x1, out, offset);
        }
    }

    @Override
    public int changedRegions(long fromUs, long toUs, int[] rects) {
        int count = camera.changedRegions(fromUs, toUs, rects);
        if (count > 0) {
            return count; // the whole view
        }
        for (MovingSprite s : sprites) {
            count = s.changed(fromUs, toUs, rects, count);
        }
        return count;
    }

    @Override
    public int maxRegions() {
        return Math.max(1, 2 * sprites.length);
    }
}
