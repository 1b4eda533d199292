package dev.afterglow.filters.synth;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

/**
 * {@code parcel-line}: fast motion across a textured background. Seen from above, cardboard
 * parcels ride a roller conveyor left to right at 0.9 image widths per second (576 px/s at
 * 640x480). The rollers, side rails and the concrete floor around them are static and strongly
 * textured, so each parcel edge uncovers and covers texture as it passes; the parcels themselves
 * are smooth cardboard with a tape band and a printed label with bars, so events gather at edges.
 *
 * <p>All sizes and speeds are fractions of the image, so the scene scales down for tests (at
 * 160x120 the belt moves 144 px/s). Built from the seed; immutable.
 */
public final class ParcelLineScene extends LayeredScene {
    /** Scene name. */
    public static final String NAME = "parcel-line";
    private static final int PARCELS = 6;

    /**
     * @param width image width, at least 32
     * @param height image height, at least 24
     * @param seed seed of the textures and the parcels
     */
    public ParcelLineScene(int width, int height, long seed) {
        this(width, height, new SplittableRandom(seed ^ 0x5041_5243_454CL));
    }

    private ParcelLineScene(int width, int height, SplittableRandom random) {
        super(NAME, width, height, background(width, height, random.split()), parcels(width, height, random.split()));
    }

    private static int bedTop(int h) {
        return (int) Math.round(0.27 * h);
    }

    private static int bedBottom(int h) {
        return (int) Math.round(0.73 * h);
    }

    private static float[] background(int w, int h, SplittableRandom random) {
        double sx = w / 640.0;
        double sy = h / 480.0;
        float[] concrete = Textures.fractal(w, h, 24 * sx, 5, 0.6, random.split());
        float[] dirt = Textures.fractal(w, h, 6 * sx, 2, 0.5, random.split());
        float[] out = new float[w * h];
        int railTop = (int) Math.round(0.22 * h);
        int railBottom = (int) Math.round(0.78 * h);
        int bedTop = bedTop(h);
        int bedBottom = bedBottom(h);
        double period = 18 * sx;
        double rivetSpacing = 40 * sx;
        double lineY = 0.12 * h;
        double lineHalf = 3 * sy;
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double irradiance;
                if (y < railTop || y >= railBottom) {
                    double paint = Textures.cover(y, lineY - lineHalf, lineY + lineHalf)
                            + Textures.cover(y, h - lineY - lineHalf, h - lineY + lineHalf);
                    irradiance = 0.22 * StrictMath.exp(0.35 * concrete[i]) * (1 + 1.6 * paint);
                } else if (y < bedTop || y >= bedBottom) {
                    double rivetX = (x + 0.5) % rivetSpacing - rivetSpacing / 2;
                    double railMid = y < bedTop ? (railTop + bedTop) / 2.0 : (bedBottom + railBottom) / 2.0;
                    double r2 = (rivetX * rivetX) / (sx * sx) + (y + 0.5 - railMid) * (y + 0.5 - railMid) / (sy * sy);
                    irradiance = 0.5 * StrictMath.exp(0.12 * dirt[i]) * (r2 < 9 ? 0.35 : 1.0);
                } else {
                    // Rollers across the belt: shaded cylinders with dark gaps, 4x supersampled in x.
                    double sum = 0;
                    for (int s = 0; s < 4; s++) {
                        double phase = ((x + (s + 0.5) / 4) % period) / period;
                        sum += phase < 0.8 ? 0.12 + 0.6 * StrictMath.pow(StrictMath.sin(Math.PI * phase / 0.8), 1.5) : 0.04;
                    }
                    irradiance = sum / 4 * StrictMath.exp(0.2 * dirt[i]);
                }
                out[i] = Textures.ln(irradiance);
            }
        }
        return out;
    }

    private static List<MovingSprite> parcels(int w, int h, SplittableRandom random) {
        double sx = w / 640.0;
        int bedTop = bedTop(h);
        int bedBottom = bedBottom(h);
        int bed = bedBottom - bedTop;
        double speed = 0.9 * w;
        int maxWidth = (int) Math.ceil(130 * sx);
        double loop = 1.5 * w + maxWidth + 4;
        int[] clip = {0, 0, w, h};
        List<MovingSprite> list = new ArrayList<>();
        for (int k = 0; k < PARCELS; k++) {
            int pw = Math.max(6, (int) Math.round((60 + 70 * random.nextDouble()) * sx));
            int ph = Math.max(4, (int) Math.round((0.5 + 0.35 * random.nextDouble()) * bed));
            int top = bedTop + 2 + random.nextInt(Math.max(1, bed - ph - 3));
            float[] log = new float[pw * ph];
            float[] alpha = new float[pw * ph];
            drawParcel(pw, ph, sx, random.split(), log, alpha);
            double start = -pw - 2 + k * loop / PARCELS;
            list.add(new MovingSprite(pw, ph, log, alpha, top, start, speed, loop, clip));
        }
        return list;
    }

    private static void drawParcel(int pw, int ph, double sx, SplittableRandom random, float[] log, float[] alpha) {
        float[] board = Textures.fractal(pw, ph, 30 * sx, 2, 0.5, random.split());
        double shade = 0.38 + 0.14 * random.nextDouble();
        double tapeTop = ph * (0.42 + 0.06 * random.nextDouble());
        double tapeBottom = tapeTop + ph * 0.12;
        boolean labelLeft = random.nextBoolean();
        double labelX0 = labelLeft ? pw * 0.1 : pw * 0.55;
        double labelX1 = labelX0 + pw * 0.35;
        double labelY0 = ph * 0.08;
        double labelY1 = labelY0 + ph * 0.28;
        int bars = 5;
        double[] barX = new double[bars];
        double[] barW = new double[bars];
        for (int b = 0; b < bars; b++) {
            barX[b] = labelX0 + (labelX1 - labelX0) * (0.12 + 0.16 * b);
            barW[b] = Math.max(0.6, (1 + 2 * random.nextDouble()) * sx);
        }
        for (int y = 0; y < ph; y++) {
            for (int x = 0; x < pw; x++) {
                int i = y * pw + x;
                double v = shade * StrictMath.exp(0.04 * board[i]);
                double tape = Textures.cover(y, tapeTop, tapeBottom);
                v = v * (1 - tape) + 0.62 * tape;
                double label = Textures.cover(x, labelX0, labelX1) * Textures.cover(y, labelY0, labelY1);
                if (label > 0) {
                    double ink = 0;
                    double inBars = Textures.cover(y, labelY0 + 0.25 * (labelY1 - labelY0), labelY1 - 0.1 * (labelY1 - labelY0));
                    for (int b = 0; b < bars; b++) {
                        ink += Textures.cover(x, barX[b], barX[b] + barW[b]) * inBars;
                    }
                    double paper = 0.85 * (1 - ink) + 0.35 * ink;
                    v = v * (1 - label) + paper * label;
                }
                log[i] = Textures.ln(v);
                alpha[i] = 1f;
            }
        }
    }
}
