package dev.afterglow.node.live;

import dev.afterglow.filters.EventBatch;

/**
 * The live view's image geometry for one sensor: the sensor image shrunk by an integer factor
 * {@code f = ceil(width / maxWidth)} to {@code floor(width / f) x floor(height / f)} (a 640x480
 * sensor becomes 320x240 with the default limit of 320). The last {@code width mod f} columns and
 * {@code height mod f} rows of the sensor are left out.
 *
 * <p>Activity maps are {@code int[]} of {@link #activityLength()} with row stride
 * {@code width + 1}: one spare column and one spare row collect the events of the left-out pixels,
 * so {@link #accumulate} needs two table lookups and one add per event and no branch or division.
 * Cell ({@code cx}, {@code cy}) is at {@code cy * (width + 1) + cx}.
 *
 * <p>Immutable after construction; the methods write only into the arrays passed in, so one
 * instance can be shared by threads that each own their arrays.
 */
public final class LiveRaster {
    /** Default limit of the live image's width. */
    public static final int MAX_WIDTH = 320;

    private final int sensorWidth;
    private final int sensorHeight;
    private final int factor;
    private final int width;
    private final int height;
    private final int[] columnCell;
    private final int[] rowCell;

    /** The geometry for a {@code sensorWidth x sensorHeight} sensor and a width limit. */
    public LiveRaster(int sensorWidth, int sensorHeight, int maxWidth) {
        if (sensorWidth < 1 || sensorHeight < 1 || maxWidth < 1) {
            throw new IllegalArgumentException("sensor " + sensorWidth + "x" + sensorHeight + ", maxWidth " + maxWidth);
        }
        this.sensorWidth = sensorWidth;
        this.sensorHeight = sensorHeight;
        // A sensor lower than the factor (e.g. a line sensor) keeps at least one row.
        this.factor = Math.min(factorFor(sensorWidth, maxWidth), sensorHeight);
        this.width = sensorWidth / factor;
        this.height = sensorHeight / factor;
        int stride = width + 1;
        columnCell = new int[sensorWidth];
        for (int x = 0; x < sensorWidth; x++) {
            columnCell[x] = Math.min(x / factor, width);
        }
        rowCell = new int[sensorHeight];
        for (int y = 0; y < sensorHeight; y++) {
            rowCell[y] = Math.min(y / factor, height) * stride;
        }
    }

    /** Smallest integer factor that brings {@code width} to at most {@code maxWidth}. */
    public static int factorFor(int width, int maxWidth) {
        return (width + maxWidth - 1) / maxWidth;
    }

    /** Shrink factor. */
    public int factor() {
        return factor;
    }

    /** Live image width. */
    public int width() {
        return width;
    }

    /** Live image height. */
    public int height() {
        return height;
    }

    /** Pixels of the live image. */
    public int pixels() {
        return width * height;
    }

    /** Length of an activity map (the image plus a spare row and column). */
    public int activityLength() {
        return (width + 1) * (height + 1);
    }

    /**
     * Adds each event's polarity (+1 ON, -1 OFF) to its cell: afterwards a cell holds ON minus OFF
     * events of its {@code f x f} sensor pixels. Events must lie inside the sensor (the decoder
     * guarantees it). No allocation.
     */
    public void accumulate(EventBatch b, int[] activity) {
        int[] xs = b.x;
        int[] ys = b.y;
        byte[] ps = b.p;
        int[] col = columnCell;
        int[] row = rowCell;
        for (int i = 0, n = b.size; i < n; i++) {
            activity[row[ys[i]] + col[xs[i]]] += ps[i];
        }
    }

    /**
     * Shrinks a sensor-sized 8-bit image into {@code out} ({@link #pixels()} bytes, row stride
     * {@link #width()}): each output pixel is the mean of its {@code f x f} block, rounded half up.
     */
    public void downscaleGray(byte[] gray, byte[] out) {
        if (gray.length < sensorWidth * sensorHeight || out.length < pixels()) {
            throw new IllegalArgumentException("gray " + gray.length + " < " + sensorWidth * sensorHeight
                    + " or out " + out.length + " < " + pixels());
        }
        int f = factor;
        if (f == 1) {
            for (int y = 0; y < height; y++) {
                System.arraycopy(gray, y * sensorWidth, out, y * width, width);
            }
            return;
        }
        int n = f * f;
        int half = n / 2;
        for (int cy = 0; cy < height; cy++) {
            int o = cy * width;
            for (int cx = 0; cx < width; cx++) {
                int sum = 0;
                int s = cy * f * sensorWidth + cx * f;
                for (int dy = 0; dy < f; dy++, s += sensorWidth) {
                    for (int dx = 0; dx < f; dx++) {
                        sum += gray[s + dx] & 0xFF;
                    }
                }
                out[o + cx] = (byte) ((sum + half) / n);
            }
        }
    }

    /**
     * Writes the image part of an activity map as signed bytes, each count clamped to
     * [-127, 127], row stride {@link #width()}.
     */
    public void packActivity(int[] activity, byte[] out) {
        int stride = width + 1;
        for (int cy = 0; cy < height; cy++) {
            int a = cy * stride;
            int o = cy * width;
            for (int cx = 0; cx < width; cx++) {
                int v = activity[a + cx];
                out[o + cx] = (byte) (v > 127 ? 127 : Math.max(v, -127));
            }
        }
    }
}
