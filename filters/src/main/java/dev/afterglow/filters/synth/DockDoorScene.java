package dev.afterglow.filters.synth;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

/**
 * {@code dock-door}: a high dynamic range. A dim warehouse interior (irradiance about 0.01 to 0.1
 * of the frames' full scale, shelving on the left, corrugated wall) beside an open loading-dock
 * door onto a sunlit yard (3 to 40 times full scale): about 8 natural-log units, over 70 dB. A
 * white van drives right to left through the bright opening and a dark pallet cart with a
 * reflective stripe crosses the dim floor left to right, passing in front of the door's light
 * pool and the bottom of the opening, while a worker in dark clothes walks slowly the other way, a
 * silhouette against the daylight. With the default sensor the frames saturate in the opening
 * and sink into the noise floor in the interior; events see both.
 *
 * <p>Sizes and speeds are fractions of the image (van 0.35, cart 0.3, worker 0.12 image widths per second), so
 * the scene scales down for tests. Built from the seed; immutable.
 */
public final class DockDoorScene extends LayeredScene {
    /** Scene name. */
    public static final String NAME = "dock-door";

    /**
     * @param width image width, at least 32
     * @param height image height, at least 24
     * @param seed seed of the textures
     */
    public DockDoorScene(int width, int height, long seed) {
        this(width, height, new SplittableRandom(seed ^ 0x444F_434BL));
    }

    private DockDoorScene(int width, int height, SplittableRandom random) {
        super(NAME, width, height, background(width, height, random.split()), movers(width, height, random.split()));
    }

    /** The opening {x0, y0, x1, y1}. */
    private static int[] opening(int w, int h) {
        return new int[] {(int) Math.round(0.52 * w), (int) Math.round(0.12 * h),
                (int) Math.round(0.86 * w), (int) Math.round(0.64 * h)};
    }

    private static float[] background(int w, int h, SplittableRandom random) {
        double sx = w / 640.0;
        double sy = h / 480.0;
        int[] door = opening(w, h);
        float[] grain = Textures.fractal(w, h, 20 * sx, 4, 0.6, random.split());
        float[] fine = Textures.fractal(w, h, 4 * sx, 2, 0.5, random.split());
        double floorY = 0.64 * h;
        double doorCx = (door[0] + door[2]) / 2.0;
        double frame = 6 * sx;
        double skyline = door[1] + 0.35 * (door[3] - door[1]);
        double yardTop = door[1] + 0.62 * (door[3] - door[1]);
        float[] out = new float[w * h];
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double px = x + 0.5;
                double py = y + 0.5;
                double v;
                boolean outside = x >= door[0] && x < door[2] && y >= door[1] && y < door[3];
                if (outside) {
                    if (py < skyline) {
                        v = 40 * (0.75 + 0.25 * (py - door[1]) / (skyline - door[1])) * StrictMath.exp(0.1 * grain[i]);
                    } else if (py < yardTop) {
                        // A sunlit building across the yard with a grid of darker windows.
                        double cellX = 26 * sx;
                        double cellY = 22 * sy;
                        double wx = ((px - door[0]) % cellX) / cellX;
                        double wy = ((py - skyline) % cellY) / cellY;
                        boolean window = wx > 0.25 && wx < 0.75 && wy > 0.3 && wy < 0.75;
                        v = window ? 3.0 : 14 * StrictMath.exp(0.15 * grain[i]);
                    } else {
                        v = 8 * StrictMath.exp(0.3 * grain[i] + 0.2 * fine[i]);
                    }
                } else {
                    if (py >= floorY) {
                        // Floor, lit by a pool of daylight in front of the door.
                        double dx = (px - doorCx) / (0.22 * w);
                        double dy = (py - floorY) / (0.3 * h);
                        double pool = 0.9 * StrictMath.exp(-(dx * dx + dy * dy));
                        v = (0.02 + pool) * StrictMath.exp(0.25 * grain[i] + 0.1 * fine[i]);
                    } else if (px < 0.4 * w) {
                        // Shelving: dark uprights and beams, boxes of varying shade.
                        double bay = 80 * sx;
                        double level = 0.64 * h / 4;
                        double bx = px % bay;
                        double by = py % level;
                        boolean upright = bx < 6 * sx;
                        boolean beam = by < 5 * sy;
                        if (upright || beam) {
                            v = 0.008;
                        } else {
                            int box = (int) (px / (bay / 3)) * 31 + (int) (py / level) * 7;
                            double shade = 0.03 + 0.05 * (((box * 2654435761L) >>> 8) % 100) / 100.0;
                            v = shade * StrictMath.exp(0.2 * fine[i]);
                        }
                    } else {
                        double rib = 0.5 + 0.5 * StrictMath.cos(2 * Math.PI * px / (12 * sx));
                        v = 0.03 * (0.7 + 0.6 * rib) * StrictMath.exp(0.2 * grain[i]);
                    }
                    // Door frame: a dark steel border around the opening.
                    double onFrame = Textures.cover(px, door[0] - frame, door[2] + frame) * Textures.cover(py, door[1] - frame, door[3])
                            * (1 - Textures.cover(px, door[0], door[2]) * Textures.cover(py, door[1], door[3]));
                    v = v * (1 - onFrame) + 0.006 * onFrame;
                }
                out[i] = Textures.ln(v);
            }
        }
        return out;
    }

    private static List<MovingSprite> movers(int w, int h, SplittableRandom random) {
        double sx = w / 640.0;
        double sy = h / 480.0;
        int[] door = opening(w, h);
        List<MovingSprite> list = new ArrayList<>();

        // The van: white body, dark windows, black wheels, a coloured stripe; drives right to left.
        int vw = Math.max(8, (int) Math.round(150 * sx));
        int vh = Math.max(6, (int) Math.round(80 * sy));
        float[] vanLog = new float[vw * vh];
        float[] vanAlpha = new float[vw * vh];
        float[] paint = Textures.fractal(vw, vh, 12 * sx, 2, 0.5, random.split());
        for (int y = 0; y < vh; y++) {
            for (int x = 0; x < vw; x++) {
                int i = y * vw + x;
                double u = (x + 0.5) / vw;
                double t = (y + 0.5) / vh;
                double v = 30 * StrictMath.exp(0.1 * paint[i]);
                if (t > 0.12 && t < 0.42 && ((u > 0.06 && u < 0.26) || (u > 0.32 && u < 0.52))) {
                    v = 1.2; // windows
                }
                if (t > 0.55 && t < 0.65) {
                    v = 4; // stripe
                }
                double wheel = Math.min(1, wheelCover(u, t, 0.2, vw, vh) + wheelCover(u, t, 0.8, vw, vh));
                v = v * (1 - wheel) + 0.25 * wheel;
                vanLog[i] = Textures.ln(v);
                vanAlpha[i] = 1f;
            }
        }
        int vanTop = door[3] - vh - (int) Math.round(4 * sy);
        double vanSpeed = -0.35 * w;
        double vanLoop = (door[2] - door[0]) + vw + 4 + 0.3 * w;
        list.add(new MovingSprite(vw, vh, vanLog, vanAlpha, vanTop, door[2] - 0.2 * w, vanSpeed, vanLoop, door));

        // The pallet cart: dark boxes with a reflective stripe and black wheels; crosses the floor.
        int cw = Math.max(8, (int) Math.round(110 * sx));
        int ch = Math.max(6, (int) Math.round(100 * sy));
        float[] cartLog = new float[cw * ch];
        float[] cartAlpha = new float[cw * ch];
        float[] board = Textures.fractal(cw, ch, 10 * sx, 3, 0.5, random.split());
        for (int y = 0; y < ch; y++) {
            for (int x = 0; x < cw; x++) {
                int i = y * cw + x;
                double t = (y + 0.5) / ch;
                double u = (x + 0.5) / cw;
                double v = 0.05 * StrictMath.exp(0.3 * board[i]);
                if (t > 0.3 && t < 0.38) {
                    v = 0.5; // reflective stripe
                }
                if (t > 0.6 && t < 0.62 || u > 0.49 && u < 0.51 && t < 0.85) {
                    v = 0.012; // gaps between the boxes
                }
                if (t > 0.88) {
                    v = 0.004; // pallet and wheels
                }
                cartLog[i] = Textures.ln(v);
                cartAlpha[i] = 1f;
            }
        }
        int cartTop = (int) Math.round(0.58 * h);
        double cartSpeed = 0.3 * w;
        double cartLoop = w + cw + 4 + 0.25 * w;
        list.add(new MovingSprite(cw, ch, cartLog, cartAlpha, cartTop, 0.05 * w, cartSpeed, cartLoop, new int[] {0, 0, w, h}));

        // A worker in dark clothes with a reflective vest walks slowly right to left in front of the
        // door: a silhouette against the daylight.
        int ww = Math.max(5, (int) Math.round(36 * sx));
        int wh = Math.max(8, (int) Math.round(150 * sy));
        float[] workerLog = new float[ww * wh];
        float[] workerAlpha = new float[ww * wh];
        for (int y = 0; y < wh; y++) {
            for (int x = 0; x < ww; x++) {
                int i = y * ww + x;
                double px = x + 0.5;
                double py = y + 0.5;
                double head = 0.12 * wh;
                double hx = (px - ww / 2.0) / (0.3 * ww);
                double hy = (py - head) / head;
                double headCover = Textures.clamp((1 - StrictMath.sqrt(hx * hx + hy * hy)) * 0.3 * ww + 0.5, 0, 1);
                double body = Textures.cover(py, 2 * head, 0.62 * wh) * Textures.cover(px, 0.05 * ww, 0.95 * ww);
                double legs = Textures.cover(py, 0.62 * wh, wh) * (Textures.cover(px, 0.15 * ww, 0.45 * ww)
                        + Textures.cover(px, 0.55 * ww, 0.85 * ww));
                double a = Math.min(1, headCover + body + legs);
                double vest = Textures.cover(py, 0.3 * wh, 0.36 * wh);
                workerLog[i] = Textures.ln(0.015 * (1 - vest) + 0.35 * vest);
                workerAlpha[i] = (float) a;
            }
        }
        int workerTop = door[3] - (int) Math.round(0.9 * wh);
        double workerSpeed = -0.12 * w;
        double workerLoop = w + ww + 4 + 0.1 * w;
        list.add(new MovingSprite(ww, wh, workerLog, workerAlpha, workerTop, 0.75 * w, workerSpeed, workerLoop, new int[] {0, 0, w, h}));
        return list;
    }

    private static double wheelCover(double u, double t, double centreU, int vw, int vh) {
        double dx = (u - centreU) * vw;
        double dy = (t - 0.92) * vh;
        double r = 0.1 * vh + 2;
        double d = StrictMath.sqrt(dx * dx + dy * dy);
        return Textures.clamp(r - d + 0.5, 0, 1);
    }
}
