package dev.afterglow.filters.synth;

import java.util.SplittableRandom;

/**
 * Standard normal deviates for the sensor, bit-for-bit reproducible on every JVM (Box-Muller with
 * {@link StrictMath}), plus a fixed table of deviates for the per-event and per-pixel draws where a
 * transcendental call per draw would cost too much.
 */
final class Gaussians {
    /** Entries in the table; a power of two so an index is a mask of a random int. */
    static final int TABLE_SIZE = 1 << 14;

    private Gaussians() {
    }

    /** One standard normal deviate (Box-Muller, cosine branch). */
    static double next(SplittableRandom random) {
        double u = 1.0 - random.nextDouble(); // (0, 1]
        double v = random.nextDouble();
        return StrictMath.sqrt(-2.0 * StrictMath.log(u)) * StrictMath.cos(2.0 * Math.PI * v);
    }

    /**
     * A table of {@value #TABLE_SIZE} normal deviates drawn from {@code random} and standardised to
     * mean 0 and variance 1 exactly, so a uniform index into it gives zero-mean unit-variance noise.
     */
    static float[] table(SplittableRandom random) {
        double[] d = new double[TABLE_SIZE];
        double sum = 0;
        for (int i = 0; i < d.length; i++) {
            d[i] = next(random);
            sum += d[i];
        }
        double mean = sum / d.length;
        double sq = 0;
        for (int i = 0; i < d.length; i++) {
            d[i] -= mean;
            sq += d[i] * d[i];
        }
        double scale = 1.0 / StrictMath.sqrt(sq / d.length);
        float[] t = new float[d.length];
        for (int i = 0; i < d.length; i++) {
            t[i] = (float) (d[i] * scale);
        }
        return t;
    }
}
