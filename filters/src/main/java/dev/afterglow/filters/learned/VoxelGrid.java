package dev.afterglow.filters.learned;

import dev.afterglow.filters.EventBatch;
import java.nio.FloatBuffer;
import java.util.Arrays;

/**
 * An event voxel grid: the events of one time window binned into B temporal bins per pixel with
 * bilinear weighting in time, as fed to recurrent reconstruction networks (H. Rebecq, R. Ranftl,
 * V. Koltun and D. Scaramuzza, "High speed and high dynamic range video with an event camera",
 * IEEE TPAMI 2019; also C. Scheerlinck et al., WACV 2020), and the per-grid normalisation used
 * there.
 *
 * <p>Binning, for a window [t0, t1) and an event (x, y, t, p):
 *
 * <pre>
 * double tau = (B - 1) * (double) (t - t0) / (double) (t1 - t0);   clamped to [0, B - 1]
 * int i0 = floor(tau);  float f = (float) (tau - i0);
 * grid[i0][y][x] += p * (1f - f);   if (i0 + 1 &lt; B) grid[i0 + 1][y][x] += p * f;
 * </pre>
 *
 * in float, in event order. This is a streaming adaptation: the papers normalise time by the
 * first and last event of the window; here the window's bounds are used, so an event is binned as
 * it arrives, without buffering the window. Events after t1 land in the last bin (clamped), events
 * before t0 in the first.
 *
 * <p>Normalisation ({@link #normaliseInto}): over the non-zero cells only, the mean m and the
 * population standard deviation s, both computed in double over the cells in row-major
 * (bin, y, x) order, two passes; each non-zero cell v becomes {@code (float) ((v - m) / s)} (or
 * {@code (float) (v - m)} if s is 0); zero cells stay 0. An empty grid stays all zeros. The
 * training code computes the same with the same float operations, so a model sees in the node
 * exactly what it saw in training.
 *
 * <p>Costs: per event a double division, a float multiply-add or two, no allocation; per window
 * three passes over the B × width × height cells. Threading: single owner thread.
 */
public final class VoxelGrid {
    private final int bins;
    private final int width;
    private final int height;
    private final int plane;
    private final float[] cells;
    private long eventsAdded;

    /**
     * @param bins B, at least 2 (the bilinear rule needs two bin centres)
     * @param width sensor width
     * @param height sensor height
     */
    public VoxelGrid(int bins, int width, int height) {
        if (bins < 2 || width < 1 || height < 1 || (long) bins * width * height > Integer.MAX_VALUE - 8) {
            throw new IllegalArgumentException("voxel grid " + bins + " x " + width + " x " + height
                    + " outside 2 x 1 x 1 .. 2^31 cells");
        }
        this.bins = bins;
        this.width = width;
        this.height = height;
        this.plane = width * height;
        this.cells = new float[bins * plane];
    }

    /**
     * Bins every event of {@code batch} into the window [{@code t0Us}, {@code t1Us}). Pixels must
     * lie inside the sensor (the packet decoder guarantees it).
     *
     * @throws IllegalArgumentException if {@code t1Us <= t0Us}
     */
    public void add(EventBatch batch, long t0Us, long t1Us) {
        add(batch, 0, batch.size, t0Us, t1Us);
    }

    /**
     * Bins events {@code from} (inclusive) to {@code to} (exclusive) of {@code batch} into the
     * window [{@code t0Us}, {@code t1Us}), as {@link #add(EventBatch, long, long)}.
     *
     * @throws IllegalArgumentException if {@code t1Us <= t0Us} or the range is not inside the batch
     */
    public void add(EventBatch batch, int from, int to, long t0Us, long t1Us) {
        if (t1Us <= t0Us) {
            throw new IllegalArgumentException("window [" + t0Us + ", " + t1Us + ") is empty");
        }
        if (from < 0 || to > batch.size || from > to) {
            throw new IllegalArgumentException("events [" + from + ", " + to + ") outside the batch of " + batch.size);
        }
        if (from == to) {
            return;
        }
        float[] g = cells;
        int[] xs = batch.x;
        int[] ys = batch.y;
        int[] ts = batch.t;
        byte[] ps = batch.p;
        int w = width;
        int planeSize = plane;
        int last = bins - 1;
        double lastBin = last;
        double span = (double) (t1Us - t0Us);
        long base = batch.timeBaseUs - t0Us;
        for (int i = from; i < to; i++) {
            // Written exactly as the contract: (B - 1) * (double) (t - t0) / (double) (t1 - t0).
            double tau = lastBin * (double) (base + ts[i]) / span;
            if (tau < 0) {
                tau = 0;
            } else if (tau > lastBin) {
                tau = lastBin;
            }
            int i0 = (int) tau; // tau >= 0, so the cast is floor
            float f = (float) (tau - i0);
            float p = ps[i];
            int cell = i0 * planeSize + ys[i] * w + xs[i];
            g[cell] += p * (1f - f);
            if (i0 < last) {
                g[cell + planeSize] += p * f;
            }
        }
        eventsAdded += to - from;
    }

    /**
     * Normalises the grid (see the class comment) into {@code out}, laid out as
     * [B][paddedHeight][paddedWidth] from index 0 with the sensor in the top-left corner, and
     * empties the grid. Only the sensor's cells of {@code out} are written: its padding keeps
     * whatever it holds (zeros, for a buffer that is only ever written here).
     *
     * @throws IllegalArgumentException if the padded size is smaller than the sensor or {@code out} too small
     */
    public void normaliseInto(FloatBuffer out, int paddedWidth, int paddedHeight) {
        if (paddedWidth < width || paddedHeight < height || (long) bins * paddedWidth * paddedHeight > out.capacity()) {
            throw new IllegalArgumentException("padded " + paddedWidth + "x" + paddedHeight + " x " + bins
                    + " bins does not hold the " + width + "x" + height + " grid or exceeds the buffer (" + out.capacity() + ")");
        }
        normalise(cells);
        for (int b = 0; b < bins; b++) {
            for (int y = 0; y < height; y++) {
                out.put((b * paddedHeight + y) * paddedWidth, cells, b * plane + y * width, width);
            }
        }
        clear();
    }

    /**
     * Normalises {@code v} in place: non-zero cells by the mean and population deviation of the
     * non-zero cells. Written without branches on the cell values (a zero cell adds exactly 0 to the
     * sums, which leaves a double sum unchanged bit for bit), since which cells are zero is random
     * and mispredicted branches cost more than the arithmetic. The sums run in cell order, as the
     * contract says, so they stay sequential (not vectorised).
     */
    static void normalise(float[] v) {
        double sum = 0;
        int count = 0;
        for (float c : v) {
            sum += c;
            count += c != 0 ? 1 : 0;
        }
        if (count == 0) {
            Arrays.fill(v, 0f); // no -0.0 left behind
            return;
        }
        double mean = sum / count;
        double squares = 0;
        for (float c : v) {
            double d = c - mean;
            squares += c != 0 ? d * d : 0.0;
        }
        double deviation = Math.sqrt(squares / count);
        if (deviation > 0) {
            for (int i = 0; i < v.length; i++) {
                float c = v[i];
                float n = (float) ((c - mean) / deviation);
                v[i] = c != 0 ? n : 0f;
            }
        } else {
            for (int i = 0; i < v.length; i++) {
                float c = v[i];
                float n = (float) (c - mean);
                v[i] = c != 0 ? n : 0f;
            }
        }
    }

    /** Empties the grid. */
    public void clear() {
        Arrays.fill(cells, 0f);
        eventsAdded = 0;
    }

    /** The raw accumulated cells, [B][height][width] row-major; read-only use (tests, diagnostics). */
    public float[] cells() {
        return cells;
    }

    /** Events binned since the grid was last emptied. */
    public long eventsAdded() {
        return eventsAdded;
    }

    /** B. */
    public int bins() {
        return bins;
    }

    /** Sensor width. */
    public int width() {
        return width;
    }

    /** Sensor height. */
    public int height() {
        return height;
    }
}
