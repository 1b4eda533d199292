package dev.afterglow.filters.synth;

import java.util.SplittableRandom;

/**
 * {@code orchard-pan}: a mostly static scene under slow camera motion. An orchard (sky, hills,
 * rows of trees with leafy crowns and fruit, a fence, grass) seen by a camera that pans right by
 * a tenth of the image width over 3 s with a smooth start and stop, holds 1 s, pans back over 3 s
 * and holds 1 s (an 8 s cycle; at most 34 px/s at 640x480), with a slight vertical drift. Nothing
 * in the scene moves by itself, so while the camera holds, the image is static and only the
 * static background is left to recover.
 *
 * <p>The panorama is precomputed once; each render is a bilinear sample at the camera offset
 * (the same weights for every pixel). Sizes are fractions of the image, so the scene scales down
 * for tests. Built from the seed; immutable.
 */
public final class OrchardPanScene implements Scene {
    /** Scene name. */
    public static final String NAME = "orchard-pan";
    private static final long MOVE_US = 3_000_000;
    private static final long HOLD_US = 1_000_000;

    private final int width;
    private final int height;
    private final CameraPan pan;

    /**
     * @param width image width, at least 32
     * @param height image height, at least 24
     * @param seed seed of the textures and tree positions
     */
    public OrchardPanScene(int width, int height, long seed) {
        this.width = width;
        this.height = height;
        SplittableRandom random = new SplittableRandom(seed ^ 0x4F52_4348L);
        this.pan = new CameraPan(width, height, 0.1 * width, 0.012 * height, MOVE_US, HOLD_US, false,
                (w, h) -> panorama(w, h, width / 640.0, height / 480.0, random));
    }

    private static float[] panorama(int w, int h, double sx, double sy, SplittableRandom random) {
        float[] clouds = Textures.fractal(w, h, 80 * sx, 4, 0.5, random.split());
        float[] hillLine = Textures.fractal(w, 1, 120 * sx, 3, 0.5, random.split());
        float[] coarse = Textures.fractal(w, h, 30 * sx, 3, 0.5, random.split());
        float[] leaves = Textures.fractal(w, h, 5 * sx, 3, 0.6, random.split());
        float[] grass = Textures.fractal(w, h, 3 * sx, 2, 0.6, random.split());
        double horizon = 0.34 * h;
        double groundTop = 0.56 * h;
        float[] out = new float[w * h];
        // Sky, hills and ground.
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double py = y + 0.5;
                double hillY = horizon - 0.07 * h * (1 + hillLine[x]);
                double v;
                if (py < hillY) {
                    v = (0.62 + 0.2 * py / horizon) * StrictMath.exp(0.12 * clouds[i]);
                } else if (py < groundTop) {
                    v = 0.22 * StrictMath.exp(0.25 * coarse[i]);
                } else {
                    double depth = (py - groundTop) / (h - groundTop);
                    v = (0.14 + 0.06 * depth) * StrictMath.exp(0.8 * grass[i] + 0.2 * coarse[i]);
                }
                double edge = Textures.cover(py, hillY - 0.5, hillY + 0.5);
                if (edge > 0 && edge < 1) {
                    v = v * (1 - edge) + 0.5 * edge;
                }
                out[i] = Textures.ln(v);
            }
        }
        // Trees, back to front: trunk, crown of leaves with fruit.
        double spacing = 60 * sx;
        int trees = (int) Math.ceil(w / spacing) + 1;
        for (int k = 0; k < trees; k++) {
            double cx = (k + 0.2 + 0.6 * random.nextDouble()) * spacing;
            double base = groundTop + (0.05 + 0.08 * random.nextDouble()) * h;
            double trunkHalf = (3 + 2 * random.nextDouble()) * sx;
            double crownY = base - (0.2 + 0.05 * random.nextDouble()) * h;
            double rx = (26 + 8 * random.nextDouble()) * sx;
            double ry = (34 + 8 * random.nextDouble()) * sy;
            int fruits = 10;
            double[] fx = new double[fruits];
            double[] fy = new double[fruits];
            for (int f = 0; f < fruits; f++) {
                double a = random.nextDouble() * 2 * Math.PI;
                double r = StrictMath.sqrt(random.nextDouble()) * 0.8;
                fx[f] = cx + r * rx * StrictMath.cos(a);
                fy[f] = crownY + r * ry * StrictMath.sin(a);
            }
            double fruitR = Math.max(0.7, 2.2 * sx);
            int y0 = Math.max(0, (int) (crownY - ry - 2));
            int y1 = Math.min(h, (int) (base + 2));
            int x0 = Math.max(0, (int) (cx - rx - 2));
            int x1 = Math.min(w, (int) (cx + rx + 3));
            for (int y = y0; y < y1; y++) {
                for (int x = x0; x < x1; x++) {
                    int i = y * w + x;
                    double px = x + 0.5;
                    double py = y + 0.5;
                    double v = StrictMath.exp(out[i]);
                    double trunk = Textures.cover(px, cx - trunkHalf, cx + trunkHalf) * Textures.cover(py, crownY, base);
                    v = v * (1 - trunk) + 0.05 * StrictMath.exp(0.3 * coarse[i]) * trunk;
                    double dx = (px - cx) / rx;
                    double dy = (py - crownY) / ry;
                    double d = StrictMath.sqrt(dx * dx + dy * dy);
                    double crown = Textures.clamp((1 - d) * Math.min(rx, ry) + 0.5, 0, 1);
                    if (crown > 0) {
                        double leaf = 0.13 * StrictMath.exp(1.3 * leaves[i]);
                        double fruit = 0;
                        for (int f = 0; f < fruits; f++) {
                            double ex = px - fx[f];
                            double ey = py - fy[f];
                            fruit = Math.max(fruit, Textures.clamp(fruitR - StrictMath.sqrt(ex * ex + ey * ey) + 0.5, 0, 1));
                        }
                        leaf = leaf * (1 - fruit) + 0.55 * fruit;
                        v = v * (1 - crown) + leaf * crown;
                    }
                    out[i] = Textures.ln(v);
                }
            }
        }
        // A wooden fence in front: two rails and posts.
        double railA = 0.8 * h;
        double railB = 0.88 * h;
        double railHalf = 2.5 * sy;
        double postSpacing = 48 * sx;
        double postHalf = 3 * sx;
        for (int y = (int) (0.76 * h); y < h; y++) {
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double px = x + 0.5;
                double py = y + 0.5;
                double rail = Math.max(Textures.cover(py, railA - railHalf, railA + railHalf),
                        Textures.cover(py, railB - railHalf, railB + railHalf));
                double post = (Textures.cover(px % postSpacing, postSpacing / 2 - postHalf, postSpacing / 2 + postHalf))
                        * Textures.cover(py, 0.77 * h, 0.95 * h);
                double wood = Math.max(rail, post);
                if (wood > 0) {
                    double v = StrictMath.exp(out[i]);
                    v = v * (1 - wood) + 0.4 * StrictMath.exp(0.2 * coarse[i]) * wood;
                    out[i] = Textures.ln(v);
                }
            }
        }
        return out;
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
        return pan.maxSpeedPxPerS();
    }

    @Override
    public void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset) {
        pan.renderRow(timeUs, y, x0, x1, out, offset);
    }

    @Override
    public int changedRegions(long fromUs, long toUs, int[] rects) {
        return pan.changedRegions(fromUs, toUs, rects);
    }

    @Override
    public int maxRegions() {
        return 1;
    }
}
