package dev.afterglow.filters.recon;

/**
 * Noise of a sensor frame pixel in log intensity, by pixel value, as lookup tables per bit depth
 * (no per-pixel {@code log}). A pixel value v (0 .. M, M = 2^bits - 1) has variance
 * {@code g·v + r² + 1/12} in counts: photon shot noise proportional to the signal (gain g counts
 * per photo-electron), read noise r, and the uniform quantisation noise of one count (1/12 count²)
 * (common practice; e.g. the EMVA 1288 standard's linear camera model). Its log intensity is
 * {@code z = ln((v + 1/2) / (M + 1))} and, by the delta method, the variance of z is the count
 * variance divided by {@code (v + 1/2)²}: dark pixels are uncertain because their relative noise is
 * large, with no separate threshold. A pixel at or above {@code saturatedFraction·M} carries no
 * information about how bright the scene is, only that it is at least that bright: it gets
 * {@link #SATURATED_VARIANCE}. Values are given for 8-bit counts and scaled to other bit depths.
 * Immutable tables, built on first use per bit depth; single owner thread.
 */
public final class FrameNoiseModel {
    /** Variance (log units²) of a saturated pixel: so large (next to any estimate's, even an unknown one) that its measurement weighs nothing. */
    public static final double SATURATED_VARIANCE = 1e12;

    private final double shotGain8;
    private final double readNoise8;
    private final double saturatedFraction;
    private int tableBits;
    private double[] logOf;
    /** ln((c + 1/2)/(M + 1)) at c = j / FINE_STEPS for c below FINE_BELOW counts. */
    private double[] fineLogOf;
    private double[] varianceOf;
    private double[] varianceAtLog;
    private double logTableStart;
    private double logTableScale;

    /** Fractional counts below which {@link #logOfCount} uses the fine table. */
    static final int FINE_BELOW = 64;
    /** Steps per count of the fine table. */
    static final int FINE_STEPS = 64;

    /** Entries of the table of variance by expected log intensity. */
    static final int LOG_TABLE_SIZE = 2048;

    /**
     * @param shotGain8 g, counts per photo-electron at 8 bits, [0, 100]
     * @param readNoise8 r, read noise in counts at 8 bits, [0, 100]
     * @param saturatedFraction values at or above this fraction of full scale are saturated, (0, 1]
     */
    public FrameNoiseModel(double shotGain8, double readNoise8, double saturatedFraction) {
        if (!(shotGain8 >= 0 && shotGain8 <= 100) || !(readNoise8 >= 0 && readNoise8 <= 100)) {
            throw new IllegalArgumentException("shot gain " + shotGain8 + " or read noise " + readNoise8 + " outside [0, 100]");
        }
        if (!(saturatedFraction > 0 && saturatedFraction <= 1)) {
            throw new IllegalArgumentException("saturated=" + saturatedFraction + " outside (0, 1]");
        }
        this.shotGain8 = shotGain8;
        this.readNoise8 = readNoise8;
        this.saturatedFraction = saturatedFraction;
    }

    /** Shot gain g in 8-bit counts. */
    public double shotGain8() {
        return shotGain8;
    }

    /** Read noise r in 8-bit counts. */
    public double readNoise8() {
        return readNoise8;
    }

    /** Fraction of full scale at and above which a pixel is saturated. */
    public double saturatedFraction() {
        return saturatedFraction;
    }

    /** The lowest pixel value at {@code bits} per pixel that counts as saturated (at least 1). */
    public int saturatedAt(int bits) {
        int max = (1 << bits) - 1;
        return Math.max(1, (int) Math.ceil(saturatedFraction * max));
    }

    /** Log intensity of pixel value {@code v} at {@code bits} per pixel. */
    public double log(int v, int bits) {
        prepare(bits);
        return logOf[v];
    }

    /** Variance (log units²) of the log intensity of pixel value {@code v} at {@code bits} per pixel. */
    public double variance(int v, int bits) {
        prepare(bits);
        return varianceOf[v];
    }

    /**
     * Variance (log units²) of a frame pixel whose expected log intensity is {@code logIntensity}:
     * the noise of the count the estimate predicts, {@code (g·μ + r² + 1/12)/(μ + 1/2)²} with
     * {@code μ = e^x·(M + 1) - 1/2}, from a table over x (no {@code exp} per call). Weighing a
     * measurement by the noise the estimate predicts, not by the noise its own noisy value
     * implies, keeps dark pixels from favouring their brighter noise draws (common practice in
     * low-light estimation).
     */
    public double varianceAtLog(double logIntensity, int bits) {
        prepare(bits);
        return varianceAtLog[logTableIndex(logIntensity)];
    }

    int logTableIndex(double logIntensity) {
        double at = (logIntensity - logTableStart) * logTableScale;
        return at <= 0 ? 0 : at >= LOG_TABLE_SIZE - 1 ? LOG_TABLE_SIZE - 1 : (int) at;
    }

    /** The table behind {@link #varianceAtLog}; index with {@link #logTableIndex}. */
    double[] variancesAtLog(int bits) {
        prepare(bits);
        return varianceAtLog;
    }

    /**
     * Log intensity {@code ln((c + 1/2)/(M + 1))} of a fractional count c in [0, M] (a spatially
     * filtered pixel), by linear interpolation in tables, no {@code log} per call: steps of 1/64
     * count below 64 counts, whole counts above. The interpolation error is below 2e-4 log units
     * (h²/8 times the largest |(ln)''| = 1/(c + 1/2)² on each table's range).
     */
    double logOfCount(double c, int bits) {
        prepare(bits);
        if (c < FINE_BELOW) {
            double at = c * FINE_STEPS;
            int j = (int) at;
            return fineLogOf[j] + (at - j) * (fineLogOf[j + 1] - fineLogOf[j]);
        }
        int v = (int) c;
        if (v >= logOf.length - 1) {
            return logOf[logOf.length - 1];
        }
        return logOf[v] + (c - v) * (logOf[v + 1] - logOf[v]);
    }

    /** Counts at {@code bits} per pixel per count at 8 bits. */
    private static double countsPer8(int bits) {
        return ((1 << bits) - 1) / 255.0;
    }

    /** Shot gain g in counts at {@code bits} per pixel. */
    double shotGain(int bits) {
        return shotGain8 * countsPer8(bits);
    }

    /** Read plus quantisation noise variance {@code r² + 1/12} in counts² at {@code bits} per pixel. */
    double readVariance(int bits) {
        double read = readNoise8 * countsPer8(bits);
        return read * read + 1.0 / 12;
    }

    /** The log table for {@code bits} (index: pixel value). */
    double[] logs(int bits) {
        prepare(bits);
        return logOf;
    }

    /** The variance table for {@code bits} (index: pixel value). */
    double[] variances(int bits) {
        prepare(bits);
        return varianceOf;
    }

    private void prepare(int bits) {
        if (bits == tableBits) {
            return;
        }
        if (bits < 8 || bits > 16) {
            throw new IllegalArgumentException("bit depth " + bits + " outside 8..16");
        }
        int max = (1 << bits) - 1;
        double gain = shotGain(bits);
        double readVar = readVariance(bits);
        double[] logs = new double[max + 1];
        double[] vars = new double[max + 1];
        int saturatedAt = saturatedAt(bits);
        for (int v = 0; v <= max; v++) {
            double level = v + 0.5;
            logs[v] = Math.log(level / (max + 1));
            vars[v] = v >= saturatedAt ? SATURATED_VARIANCE : (gain * v + readVar) / (level * level);
        }
        logOf = logs;
        varianceOf = vars;
        double[] fine = new double[FINE_BELOW * FINE_STEPS + 1];
        for (int j = 0; j < fine.length; j++) {
            fine[j] = Math.log(((double) j / FINE_STEPS + 0.5) / (max + 1));
        }
        fineLogOf = fine;
        // By expected log intensity: from half a count (the darkest a value can say) to saturation.
        double lo = logs[0];
        double hi = logs[Math.max(0, saturatedAt - 1)];
        double[] byLog = new double[LOG_TABLE_SIZE];
        double step = (hi - lo) / (LOG_TABLE_SIZE - 1);
        for (int k = 0; k < LOG_TABLE_SIZE; k++) {
            double level = Math.exp(lo + (k + 0.5) * step) * (max + 1); // μ + 1/2
            double mu = Math.max(0, level - 0.5);
            byLog[k] = (gain * mu + readVar) / (level * level);
        }
        varianceAtLog = byLog;
        logTableStart = lo;
        logTableScale = step > 0 ? 1 / step : 0;
        tableBits = bits;
    }
}
