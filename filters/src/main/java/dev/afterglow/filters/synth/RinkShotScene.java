package dev.afterglow.filters.synth;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

/**
 * {@code rink-shot}: a small fast object whose edges outrun the pixels' refractory period. Seen
 * from above, two black rubber pucks (4% of the image width across, irradiance 0.02 against ice at
 * about 0.7, some 3.5 log units or 17 thresholds of the default contrast) are shot across a plain
 * sheet of lightly scratched ice with two painted lines: one left to right at 4 image widths per
 * second, one right to left at 3 (2560 and 1920 px/s at 640x480). Each comes round again about
 * every 0.6 to 0.8 s. The scene's sensor has a 0.8 ms refractory period, so where a puck's edge
 * passes, a pixel must cross many thresholds within a fraction of a millisecond and fires only the
 * first few: most crossings are lost ({@link SyntheticSensor#refractoryLosses()}).
 *
 * <p>Sizes and speeds are fractions of the image, so the scene scales down for tests. Built from
 * the seed; immutable.
 */
public final class RinkShotScene extends LayeredScene {
    /** Scene name. */
    public static final String NAME = "rink-shot";
    /** Puck diameter as a fraction of the image width. */
    static final double PUCK = 0.04;

    /**
     * @param width image width, at least 32
     * @param height image height, at least 24
     * @param seed seed of the textures
     */
    public RinkShotScene(int width, int height, long seed) {
        this(width, height, new SplittableRandom(seed ^ 0x5055_434BL));
    }

    private RinkShotScene(int width, int height, SplittableRandom random) {
        super(NAME, width, height, background(width, height, random.split()), pucks(width, height, random.split()));
    }

    private static float[] background(int w, int h, SplittableRandom random) {
        double sx = w / 640.0;
        float[] frost = Textures.fractal(w, h, 40 * sx, 3, 0.5, random.split());
        float[] fine = Textures.fractal(w, h, 3 * sx, 2, 0.5, random.split());
        double lineHalf = Math.max(0.7, 6 * sx);
        double[] lines = {0.3 * w, 0.7 * w};
        // A few long, faint skate scratches: y = a + b·x, each a fraction darker.
        int scratches = 12;
        double[] a = new double[scratches];
        double[] b = new double[scratches];
        for (int k = 0; k < scratches; k++) {
            a[k] = random.nextDouble() * h;
            b[k] = (random.nextDouble() - 0.5) * 0.6;
        }
        float[] out = new float[w * h];
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double px = x + 0.5;
                double py = y + 0.5;
                double v = 0.7 * StrictMath.exp(0.06 * frost[i] + 0.03 * fine[i]);
                double paint = 0;
                for (double l : lines) {
                    paint = Math.max(paint, Textures.cover(px, l - lineHalf, l + lineHalf));
                }
                v = v * (1 - paint) + 0.3 * paint;
                double scratch = 0;
                for (int k = 0; k < scratches; k++) {
                    double d = Math.abs(py - (a[k] + b[k] * px)) / Math.sqrt(1 + b[k] * b[k]);
                    scratch = Math.max(scratch, Textures.clamp(1 - d, 0, 1));
                }
                v *= 1 - 0.12 * scratch;
                out[i] = Textures.ln(v);
            }
        }
        return out;
    }

    private static List<MovingSprite> pucks(int w, int h, SplittableRandom random) {
        int d = Math.max(4, (int) Math.round(PUCK * w));
        float[] log = new float[d * d];
        float[] alpha = new float[d * d];
        double r = d / 2.0;
        for (int y = 0; y < d; y++) {
            for (int x = 0; x < d; x++) {
                int i = y * d + x;
                double dist = Math.hypot(x + 0.5 - r, y + 0.5 - r);
                alpha[i] = (float) Textures.clamp(r - dist + 0.5, 0, 1);
                // Black rubber with a faint worn ring.
                double ring = Textures.clamp(1 - Math.abs(dist - 0.7 * r), 0, 1);
                log[i] = Textures.ln(0.02 * (1 + 0.5 * ring));
            }
        }
        int[] clip = {0, 0, w, h};
        double loopA = w + d + 4 + 1.5 * w;
        double loopB = w + d + 4 + 1.2 * w;
        int topA = (int) Math.round(0.3 * h + random.nextDouble() * 0.08 * h);
        int topB = (int) Math.round(0.62 * h + random.nextDouble() * 0.08 * h);
        List<MovingSprite> list = new ArrayList<>();
        list.add(new MovingSprite(d, d, log, alpha, topA, 0.1 * w, 4.0 * w, loopA, clip));
        list.add(new MovingSprite(d, d, log, alpha, topB, 0.9 * w, -3.0 * w, loopB, clip));
        return list;
    }
}
