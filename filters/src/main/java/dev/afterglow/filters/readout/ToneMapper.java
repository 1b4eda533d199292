package dev.afterglow.filters.readout;

/**
 * Maps a log-intensity image to 8 bits with a {@link ToneMap}, without a per-pixel {@code exp}.
 *
 * <p>The range [lo, hi] (fixed, or from percentiles found with a {@value #BINS}-bin histogram
 * between the image's minimum and maximum, so they are exact to one bin width) is cut into
 * {@value #LUT_SIZE} steps (even in the position for LOG, even in its square root for GAMMA, which is
 * steep at black), and a table gives the grey level of each step for the chosen curve.
 * Values outside the range clip to 0 or 255; NaN maps to 0. Cost per frame: two passes over the
 * image in percentile mode (min/max, histogram) plus the mapping pass; one pass in fixed mode.
 *
 * <p>Threading: holds reusable buffers; one owner thread.
 */
public final class ToneMapper {
    /** Histogram bins used to find percentiles. */
    public static final int BINS = 4096;
    /** Pixels sampled at least for the range and the percentiles. */
    public static final int MIN_SAMPLES = 1 << 14;
    /** Steps of the lookup table from the mapped range to grey levels (GAMMA curve). */
    public static final int LUT_SIZE = 4096;

    private final ToneMap settings;
    private final int[] histogram = new int[BINS];
    private final float[] samples = new float[2 * MIN_SAMPLES];
    private final byte[] lut = new byte[LUT_SIZE];
    private double lutRange = Double.NaN;
    private double lastLow;
    private double lastHigh;
    private float gain;
    private float offset;

    public ToneMapper(ToneMap settings) {
        this.settings = settings;
    }

    /** The settings in use. */
    public ToneMap settings() {
        return settings;
    }

    /** Lower end of the log range used by the last {@link #apply} call. */
    public double lastLow() {
        return lastLow;
    }

    /** Upper end of the log range used by the last {@link #apply} call. */
    public double lastHigh() {
        return lastHigh;
    }

    /** Maps {@code log[0..n)} into {@code out[0..n)}. */
    public void apply(float[] log, int n, byte[] out) {
        if (settings.mode() == ToneMap.Mode.FIXED) {
            fixedRange();
        } else {
            // Copy a regular subsample once; the range and the histogram then read that small buffer.
            int stride = sampleStride(n);
            float[] sample = samples;
            int m = 0;
            for (int i = 0; i < n; i += stride) {
                sample[m++] = log[i];
            }
            rangeFromSamples(sample, m);
        }
        if (settings.curve() == ToneMap.Curve.GAMMA) {
            // GAMMA rises like u^(1/2.2) at black, too steeply for even steps of u (3 levels off
            // there), so its table is indexed by sqrt(u); below lo the root is NaN: step 0.
            float flo = (float) lastLow;
            float inv = (float) (1 / (lastHigh - lastLow));
            byte[] table = lut;
            for (int i = 0; i < n; i++) {
                float u = (float) Math.sqrt((log[i] - flo) * inv) * (LUT_SIZE - 1);
                int step = u >= LUT_SIZE - 1 ? LUT_SIZE - 1 : (u > 0 ? (int) (u + 0.5f) : 0);
                out[i] = table[step];
            }
            return;
        }
        float g = gain;
        float o = offset;
        for (int i = 0; i < n; i++) {
            out[i] = grey(log[i], g, o);
        }
    }

    /** Sets the range of a FIXED tone map (also done by {@link #apply}). */
    public void fixedRange() {
        setRange(settings.low(), settings.high());
    }

    /**
     * Sets the range from sample values (PERCENTILE mode: their percentiles; FIXED: the fixed
     * range). {@link #apply} calls this with a regular subsample of the image.
     */
    public void rangeFromSamples(float[] values, int m) {
        if (settings.mode() == ToneMap.Mode.FIXED) {
            fixedRange();
            return;
        }
        float min = Float.POSITIVE_INFINITY;
        float max = Float.NEGATIVE_INFINITY;
        for (int i = 0; i < m; i++) {
            float v = values[i];
            // Plain comparisons skip NaN (Math.min/max would spread it).
            min = v < min ? v : min;
            max = v > max ? v : max;
        }
        double lo;
        double hi;
        if (!(max > min)) { // flat image, empty or NaN-only
            lo = Float.isFinite(min) ? min - 0.5 : -0.5;
            hi = lo + 1;
        } else {
            long total = fillHistogram(values, m, min, max);
            lo = percentileValue(total, min, max, settings.low());
            hi = percentileValue(total, min, max, settings.high());
            if (!(hi > lo)) {
                hi = lo + (max - min) / BINS;
            }
        }
        setRange(lo, hi);
    }

    private void setRange(double lo, double hi) {
        lastLow = lo;
        lastHigh = hi;
        gain = (float) (255.0 / (hi - lo));
        offset = (float) (0.5 - lo * 255.0 / (hi - lo));
        buildLut(hi - lo);
    }

    /** LOG curve: grey = clamp(floor(v·gain + offset), 0, 255) with the current range. */
    public float gain() {
        return gain;
    }

    /** See {@link #gain()}. */
    public float offset() {
        return offset;
    }

    /**
     * The LOG curve's grey level of {@code v}: {@code floor(v·gain + offset)} clipped to 0..255
     * (offset includes the +0.5 that rounds); NaN gives 0 (Java's float-to-int conversion).
     */
    public static byte grey(float v, float gain, float offset) {
        int g = (int) (v * gain + offset);
        return (byte) (g < 0 ? 0 : (g > 255 ? 255 : g));
    }

    /**
     * Percentiles come from every {@code stride}-th pixel, at least {@value #MIN_SAMPLES} of them:
     * exact (to one bin) on small images, a regular subsample on large ones, where the sampling
     * error of a percentile is far below one grey level.
     */
    public static int sampleStride(int n) {
        return Math.max(1, (n + MIN_SAMPLES - 1) / MIN_SAMPLES);
    }

    /** Histogram of {@code log[0..n)} over [min, max]; returns the number of pixels counted. */
    private long fillHistogram(float[] log, int n, float min, float max) {
        int[] h = histogram;
        java.util.Arrays.fill(h, 0);
        float scale = (BINS - 1) / (max - min);
        long total = 0;
        for (int i = 0; i < n; i++) {
            float u = (log[i] - min) * scale;
            if (u >= 0) { // skips NaN
                h[Math.min(BINS - 1, (int) u)]++;
                total++;
            }
        }
        return total;
    }

    /** Log value below which {@code percent} of the counted pixels lie, to one histogram bin. */
    private double percentileValue(long total, float min, float max, double percent) {
        double target = percent / 100.0 * total;
        long seen = 0;
        double binWidth = (max - min) / (double) (BINS - 1);
        for (int b = 0; b < BINS; b++) {
            int c = histogram[b];
            if (c > 0 && seen + c >= target) {
                double within = (target - seen) / c;
                return min + (b + within) * binWidth;
            }
            seen += c;
        }
        return max;
    }

    private void buildLut(double range) {
        if (settings.curve() == ToneMap.Curve.LOG) {
            return; // computed directly in apply()
        }
        // GAMMA: grey = 255 * ((e^{r u} - 1) / (e^r - 1))^(1/2.2), u in [0, 1]; depends only on r.
        if (Math.abs(range - lutRange) <= 1e-4 * Math.abs(range)) {
            return;
        }
        double denom = Math.expm1(range);
        for (int k = 0; k < LUT_SIZE; k++) {
            double root = (double) k / (LUT_SIZE - 1);
            double u = root * root; // steps are even in sqrt(u), see apply()
            double linear = Math.expm1(range * u) / denom;
            lut[k] = (byte) Math.round(255.0 * Math.pow(linear, 1 / 2.2));
        }
        lutRange = range;
    }
}
