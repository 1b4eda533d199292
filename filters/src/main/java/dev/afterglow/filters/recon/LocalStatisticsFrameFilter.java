package dev.afterglow.filters.recon;

/**
 * Adaptive spatial denoising of one sensor frame in linear counts, by the local-statistics
 * (LMMSE) filter of J.-S. Lee ("Digital image enhancement and noise filtering by use of local
 * statistics", IEEE TPAMI 2(2), 1980): over a (2r+1)² window a pixel's count c has local mean m
 * and local variance s²; with the noise variance σ² the frame's noise model predicts at m,
 * <pre>
 *   k = max(0, s² - σ²) / s²,      y = m + k·(c - m)
 * </pre>
 * so a window whose variation is explained by noise is averaged ({@code k → 0}) and one with real
 * texture keeps its pixel ({@code k → 1}). The error variance of y is about {@code k·σ²} (the
 * LMMSE error, same paper) and never below the mean's {@code σ²/N}; {@link #varianceFactor} gives
 * that as a fraction of one pixel's σ², so the fusion weighs the filtered frame by what it is
 * worth. A window holding a saturated pixel is left alone ({@code k = 1}): a clipped count is not
 * a measurement of the mean. Dark frames (a few counts, read noise of the same size) gain most;
 * well-exposed texture is nearly untouched.
 *
 * <p>Cost: box sums of the counts, their squares and the saturated flags by running sums, about
 * 20 operations per pixel per frame whatever r; all arrays allocated once. Single owner thread.
 */
final class LocalStatisticsFrameFilter {
    private final int width;
    private final int height;
    private final int radius;
    private final double[] rowSum;
    private final double[] rowSumSq;
    private final int[] rowSaturated;
    private final double[] colSum;
    private final double[] colSumSq;
    private final int[] colSaturated;
    private final double[] filtered;
    private final float[] factor;
    /** 1 / (columns of the window at x), the window clipped at the borders. */
    private final double[] inverseColumns;

    /** @param radius window radius r, 1 .. 8 */
    LocalStatisticsFrameFilter(int width, int height, int radius) {
        if (radius < 1 || radius > 8) {
            throw new IllegalArgumentException("frame-smoothing radius " + radius + " outside 1..8");
        }
        this.width = width;
        this.height = height;
        this.radius = radius;
        int n = width * height;
        rowSum = new double[n];
        rowSumSq = new double[n];
        rowSaturated = new int[n];
        colSum = new double[width];
        colSumSq = new double[width];
        colSaturated = new int[width];
        filtered = new double[n];
        factor = new float[n];
        inverseColumns = new double[width];
        for (int x = 0; x < width; x++) {
            inverseColumns[x] = 1.0 / (Math.min(x + radius, width - 1) - Math.max(x - radius, 0) + 1);
        }
    }

    /**
     * Filters {@code counts} (one frame, row-major).
     *
     * @param saturatedAt the lowest saturated count
     * @param shotGain shot noise: count variance per count of signal, at this bit depth
     * @param readVariance read plus quantisation noise variance in counts², at this bit depth
     */
    void apply(int[] counts, int saturatedAt, double shotGain, double readVariance) {
        int w = width;
        int h = height;
        int r = radius;
        // Horizontal running sums over [x - r, x + r] clipped to the row.
        for (int y = 0; y < h; y++) {
            int row = y * w;
            double s = 0;
            double sq = 0;
            int sat = 0;
            for (int x = 0; x < Math.min(r, w); x++) {
                int c = counts[row + x];
                s += c;
                sq += (double) c * c;
                sat += c >= saturatedAt ? 1 : 0;
            }
            for (int x = 0; x < w; x++) {
                int in = x + r;
                if (in < w) {
                    int c = counts[row + in];
                    s += c;
                    sq += (double) c * c;
                    sat += c >= saturatedAt ? 1 : 0;
                }
                int out = x - r - 1;
                if (out >= 0) {
                    int c = counts[row + out];
                    s -= c;
                    sq -= (double) c * c;
                    sat -= c >= saturatedAt ? 1 : 0;
                }
                rowSum[row + x] = s;
                rowSumSq[row + x] = sq;
                rowSaturated[row + x] = sat;
            }
        }
        // Vertical running sums of the row sums, a row at a time (column accumulators), then the filter.
        double[] colS = colSum;
        double[] colSq = colSumSq;
        int[] colSat = colSaturated;
        java.util.Arrays.fill(colS, 0);
        java.util.Arrays.fill(colSq, 0);
        java.util.Arrays.fill(colSat, 0);
        for (int y = 0; y < Math.min(r, h); y++) {
            addRow(y * w, 1);
        }
        for (int y = 0; y < h; y++) {
            if (y + r < h) {
                addRow((y + r) * w, 1);
            }
            if (y - r - 1 >= 0) {
                addRow((y - r - 1) * w, -1);
            }
            double inverseRows = 1.0 / (Math.min(y + r, h - 1) - Math.max(y - r, 0) + 1);
            double[] inverseCols = inverseColumns;
            double[] out = filtered;
            float[] weight = factor;
            int row = y * w;
            for (int x = 0; x < w; x++) {
                int i = row + x;
                int c = counts[i];
                if (colSat[x] > 0) {
                    out[i] = c;
                    weight[i] = 1;
                    continue;
                }
                double inverseCount = inverseRows * inverseCols[x];
                double mean = colS[x] * inverseCount;
                double local = colSq[x] * inverseCount - mean * mean;
                double noise = shotGain * mean + readVariance;
                if (local > noise) {
                    double k = (local - noise) / local;
                    out[i] = mean + k * (c - mean);
                    weight[i] = (float) Math.max(k, inverseCount);
                } else {
                    out[i] = mean;
                    weight[i] = (float) inverseCount;
                }
            }
        }
    }

    private void addRow(int row, int sign) {
        for (int x = 0; x < width; x++) {
            colSum[x] += sign * rowSum[row + x];
            colSumSq[x] += sign * rowSumSq[row + x];
            colSaturated[x] += sign * rowSaturated[row + x];
        }
    }

    /** The filtered count of pixel {@code i} after {@link #apply}. */
    double[] filtered() {
        return filtered;
    }

    /** Error variance of each filtered pixel as a fraction of one raw pixel's noise variance, (0, 1]. */
    float[] varianceFactor() {
        return factor;
    }
}
