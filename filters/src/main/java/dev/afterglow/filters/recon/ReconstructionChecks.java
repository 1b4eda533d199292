package dev.afterglow.filters.recon;

/** Parameter limits shared by the reconstruction stages, with messages naming setting, value and limit. */
final class ReconstructionChecks {
    /** Smallest accepted contrast threshold (log units). */
    static final double MIN_CONTRAST = 0.01;
    /** Largest accepted contrast threshold (log units). */
    static final double MAX_CONTRAST = 2.0;
    /** Largest accepted cut-off in rad/s. */
    static final double MAX_CUTOFF = 1e4;

    private ReconstructionChecks() {
    }

    static void contrast(String stage, double c) {
        if (!(c >= MIN_CONTRAST && c <= MAX_CONTRAST)) {
            throw new IllegalArgumentException(
                    stage + ".contrast=" + c + " outside [" + MIN_CONTRAST + ", " + MAX_CONTRAST + "]");
        }
    }

    static void cutoff(String setting, double a, boolean zeroAllowed) {
        boolean low = zeroAllowed ? !(a >= 0) : !(a > 0);
        if (low) {
            throw new IllegalArgumentException(setting + "=" + a + "rad/s " + (zeroAllowed ? "< 0rad/s" : "<= 0rad/s"));
        }
        if (a > MAX_CUTOFF) {
            throw new IllegalArgumentException(setting + "=" + a + "rad/s > " + MAX_CUTOFF + "rad/s");
        }
    }
}
