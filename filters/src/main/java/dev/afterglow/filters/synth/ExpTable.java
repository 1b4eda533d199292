package dev.afterglow.filters.synth;

/**
 * exp(x) by table lookup with linear interpolation over [{@value #MIN}, {@value #MAX}] (clamped
 * outside), step 1/256: relative error below 2e-6 (h^2/8 for linear interpolation of exp), far
 * below an 8-bit frame's quantisation. Built with {@link StrictMath}, so results are the same on
 * every JVM. Immutable, shared.
 */
final class ExpTable {
    static final int MIN = -24;
    static final int MAX = 12;
    private static final int STEPS_PER_UNIT = 256;
    private static final float[] TABLE = build();

    private ExpTable() {
    }

    private static float[] build() {
        int n = (MAX - MIN) * STEPS_PER_UNIT + 2;
        float[] t = new float[n];
        for (int i = 0; i < n; i++) {
            t[i] = (float) StrictMath.exp(MIN + (double) i / STEPS_PER_UNIT);
        }
        return t;
    }

    /** exp(x) for x in [MIN, MAX]; clamped outside. */
    static float exp(float x) {
        float u = (x - MIN) * STEPS_PER_UNIT;
        if (!(u > 0)) {
            return TABLE[0];
        }
        if (u >= (MAX - MIN) * STEPS_PER_UNIT) {
            return TABLE[(MAX - MIN) * STEPS_PER_UNIT];
        }
        int i = (int) u;
        float f = u - i;
        return TABLE[i] + f * (TABLE[i + 1] - TABLE[i]);
    }
}
