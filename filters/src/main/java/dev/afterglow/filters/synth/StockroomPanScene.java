package dev.afterglow.filters.synth;

import java.util.SplittableRandom;

/**
 * {@code stockroom-pan}: a slow pan in low light over a rich static texture. Shelving in a dim
 * stockroom (five shelf levels of boxes, tins and bottles with printed labels and bar codes, steel
 * uprights, a dark back wall), lit to only 0.01 to 0.15 of the frames' full scale, seen by a camera
 * that pans left by 8% of the image width over 4 s with a smooth start and stop, holds 2 s, pans
 * back over 4 s and holds 2 s (a 12 s cycle; at most about 20 px/s at 640x480, below
 * {@code orchard-pan}'s 34 px/s), with a slight vertical drift. The scene's sensor fires
 * background activity at 5 Hz per pixel: in the holds, and for pixels the slow pan barely
 * changes, noise events outnumber signal, and a filter that waits a few milliseconds for a
 * neighbour's support sees little of it.
 *
 * <p>The panorama is precomputed once; each render is a bilinear sample at the camera offset.
 * Sizes are fractions of the image, so the scene scales down for tests. Built from the seed;
 * immutable.
 */
public final class StockroomPanScene implements Scene {
    /** Scene name. */
    public static final String NAME = "stockroom-pan";
    private static final long MOVE_US = 4_000_000;
    private static final long HOLD_US = 2_000_000;
    private static final int LEVELS = 5;

    private final int width;
    private final int height;
    private final CameraPan pan;

    /**
     * @param width image width, at least 32
     * @param height image height, at least 24
     * @param seed seed of the textures and the goods
     */
    public StockroomPanScene(int width, int height, long seed) {
        this.width = width;
        this.height = height;
        SplittableRandom random = new SplittableRandom(seed ^ 0x5354_4F43L);
        this.pan = new CameraPan(width, height, 0.08 * width, 0.01 * height, MOVE_US, HOLD_US, true,
                (w, h) -> panorama(w, h, width / 640.0, height / 480.0, random));
    }

    private static float[] panorama(int w, int h, double sx, double sy, SplittableRandom random) {
        float[] grain = Textures.fractal(w, h, 24 * sx, 4, 0.6, random.split());
        float[] fine = Textures.fractal(w, h, 2.5 * sx, 2, 0.5, random.split());
        double[] lin = new double[w * h];
        // Dim light from a lamp above the middle, falling off to the sides and the floor.
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                lin[y * w + x] = 0.012 * StrictMath.exp(0.3 * grain[y * w + x]); // back wall
            }
        }
        double levelH = 0.92 * h / LEVELS;
        double board = Math.max(1.0, 7 * sy);
        for (int level = 0; level < LEVELS; level++) {
            double shelfTop = 0.04 * h + level * levelH;
            double shelfBottom = shelfTop + levelH - board; // goods stand on the board at shelfBottom
            double x = random.nextDouble() * 10 * sx;
            while (x < w) {
                double gw = (10 + 28 * random.nextDouble()) * sx;
                double gh = (0.45 + 0.45 * random.nextDouble()) * (shelfBottom - shelfTop);
                int kind = random.nextInt(3); // 0 box, 1 tin, 2 bottle
                double shade = 0.025 + 0.11 * random.nextDouble();
                double labelShade = 0.04 + 0.12 * random.nextDouble();
                long bars = random.nextLong();
                drawGood(lin, w, h, x, shelfBottom - gh, gw, gh, kind, shade, labelShade, bars, sx, fine);
                x += gw + (0.5 + 4 * random.nextDouble()) * sx;
            }
            // The shelf board: a lit front edge.
            for (int y = (int) shelfBottom; y < Math.min(h, (int) Math.ceil(shelfBottom + board)); y++) {
                double cov = Textures.cover(y + 0.5, shelfBottom, shelfBottom + board);
                for (int xx = 0; xx < w; xx++) {
                    int i = y * w + xx;
                    lin[i] = lin[i] * (1 - cov) + 0.09 * StrictMath.exp(0.1 * grain[i]) * cov;
                }
            }
        }
        // Steel uprights every 0.3 image widths.
        double bay = 192 * sx;
        double upright = Math.max(1.0, 9 * sx);
        float[] out = new float[w * h];
        for (int y = 0; y < h; y++) {
            double light = 0.45 + 0.55 * StrictMath.exp(-StrictMath.pow((y + 0.5) / h - 0.3, 2) / 0.18);
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double px = (x + 0.5) % bay;
                double u = Textures.cover(px, 0, upright);
                double v = lin[i] * (1 - u) + 0.02 * u;
                double side = 0.7 + 0.3 * StrictMath.cos(Math.PI * ((x + 0.5) / w - 0.5));
                out[i] = Textures.ln(v * light * side);
            }
        }
        return out;
    }

    /** Draws one article of goods with its label over {@code lin}. */
    private static void drawGood(double[] lin, int w, int h, double left, double top, double gw, double gh, int kind,
            double shade, double labelShade, long bars, double sx, float[] fine) {
        int x0 = Math.max(0, (int) Math.floor(left));
        int x1 = Math.min(w, (int) Math.ceil(left + gw));
        int y0 = Math.max(0, (int) Math.floor(top));
        int y1 = Math.min(h, (int) Math.ceil(top + gh));
        double labelTop = top + gh * (kind == 2 ? 0.45 : 0.3);
        double labelBottom = labelTop + gh * (kind == 2 ? 0.3 : 0.4);
        double barPitch = Math.max(1.0, 2.2 * sx);
        for (int y = y0; y < y1; y++) {
            double py = y + 0.5;
            for (int x = x0; x < x1; x++) {
                double px = x + 0.5;
                double u = (px - left) / gw;
                double cov = Textures.cover(px, left, left + gw) * Textures.cover(py, top, top + gh);
                if (kind == 2) {
                    // A bottle: narrow neck at the top.
                    double neck = py < top + 0.3 * gh ? Textures.cover(px, left + 0.35 * gw, left + 0.65 * gw) : 1;
                    cov *= neck;
                }
                if (cov <= 0) {
                    continue;
                }
                double v = shade;
                if (kind == 1) {
                    v *= 0.6 + 0.6 * StrictMath.sin(Math.PI * u); // a round tin catches the light in the middle
                } else if (kind == 2) {
                    v *= 0.5 + 0.9 * StrictMath.pow(StrictMath.sin(Math.PI * u), 4); // glass highlight
                }
                double label = Textures.cover(py, labelTop, labelBottom) * Textures.cover(u, 0.08, 0.92);
                if (label > 0) {
                    double lv = labelShade;
                    // Print: a band of text-like bars and a bar code in the lower part of the label.
                    double inCode = Textures.cover(py, labelTop + 0.55 * (labelBottom - labelTop), labelBottom - 0.1 * (labelBottom - labelTop));
                    int bar = (int) ((px - left) / barPitch) & 63;
                    if (inCode > 0 && ((bars >>> bar) & 1) == 1 && u > 0.2 && u < 0.8) {
                        lv = 0.012;
                    } else if (py < labelTop + 0.3 * (labelBottom - labelTop) && ((int) ((px - left) / (3 * barPitch)) % 3 != 2)) {
                        lv = labelShade * 0.35; // a line of lettering
                    }
                    v = v * (1 - label) + lv * label;
                }
                int i = y * w + x;
                v *= StrictMath.exp(0.08 * fine[i]);
                lin[i] = lin[i] * (1 - cov) + v * cov;
            }
        }
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
