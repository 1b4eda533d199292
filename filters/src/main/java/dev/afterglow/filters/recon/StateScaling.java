package dev.afterglow.filters.recon;

/** Rescaling of scaled state with flushing of values too small to matter (avoids slow subnormals). */
final class StateScaling {
    /** Values below this after scaling are set to zero; far below any contrast step. */
    static final double FLUSH = 1e-30;

    private StateScaling() {
    }

    /** Multiplies every element by {@code f}, flushing tiny results to zero. */
    static void scale(double[] s, double f) {
        for (int i = 0; i < s.length; i++) {
            double v = s[i] * f;
            s[i] = Math.abs(v) < FLUSH ? 0 : v;
        }
    }
}
