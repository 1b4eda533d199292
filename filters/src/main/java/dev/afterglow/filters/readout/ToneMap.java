package dev.afterglow.filters.readout;

/**
 * Settings of the tone map from log intensity to 8 bits: which log range maps to 0..255 and the
 * display curve. Immutable and validated at construction.
 *
 * @param mode how the log range is chosen
 * @param low FIXED: log intensity shown as 0; PERCENTILE: percentile (0..100) shown as 0
 * @param high FIXED: log intensity shown as 255; PERCENTILE: percentile (0..100) shown as 255
 * @param curve display curve over the range
 */
public record ToneMap(Mode mode, double low, double high, Curve curve) {

    /** How the mapped log range is chosen. */
    public enum Mode {
        /** A fixed log-intensity range. */
        FIXED,
        /** From percentiles of the current image, robust to a few extreme pixels. */
        PERCENTILE
    }

    /** Display curve over the mapped range. */
    public enum Curve {
        /** Grey level linear in log intensity. */
        LOG,
        /** Grey level from linear intensity exp(L) with display gamma 2.2 (common practice for screens). */
        GAMMA
    }

    /** Percentile mode from the 1st to the 99th percentile, log curve: the default. */
    public static final ToneMap DEFAULT = new ToneMap(Mode.PERCENTILE, 1, 99, Curve.LOG);

    /** Validates the settings. */
    public ToneMap {
        if (mode == null || curve == null) {
            throw new IllegalArgumentException("tone map mode and curve are required");
        }
        if (!Double.isFinite(low) || !Double.isFinite(high) || !(low < high)) {
            throw new IllegalArgumentException("tone map low=" + low + " must be finite and below high=" + high);
        }
        if (mode == Mode.PERCENTILE && (low < 0 || high > 100)) {
            throw new IllegalArgumentException("tone map percentiles low=" + low + ", high=" + high + " outside [0, 100]");
        }
    }

    /** A fixed log range with the log curve. */
    public static ToneMap fixed(double lowLog, double highLog) {
        return new ToneMap(Mode.FIXED, lowLog, highLog, Curve.LOG);
    }

    /** A percentile range with the log curve. */
    public static ToneMap percentile(double lowPercent, double highPercent) {
        return new ToneMap(Mode.PERCENTILE, lowPercent, highPercent, Curve.LOG);
    }
}
