package dev.afterglow.filters;

/**
 * A reusable batch of events held in parallel primitive arrays.
 *
 * <p>Event {@code i} (for {@code 0 <= i < size}) is at pixel ({@code x[i]}, {@code y[i]}), at sensor
 * time {@code timeBaseUs + t[i]} microseconds, with polarity {@code p[i]} (+1 brightness up, -1
 * down). Times are stored as {@code int} offsets from a per-batch base so the arrays stay compact;
 * an offset is always non-negative and below {@link #MAX_OFFSET_US}, and {@link #maxT} bounds
 * the offsets present.
 *
 * <p>Stages filter a batch in place by compacting it (see {@link #move(int, int)}); nothing is
 * allocated after construction. Not thread-safe: a batch belongs to one thread at a time.
 */
public final class EventBatch {
    /** Column of each event. */
    public final int[] x;
    /** Row of each event. */
    public final int[] y;
    /** Time of each event in microseconds after {@link #timeBaseUs}. */
    public final int[] t;
    /** Polarity of each event: +1 or -1. */
    public final byte[] p;

    /** Sensor time in microseconds that {@link #t} is relative to. */
    public long timeBaseUs;
    /** Number of valid events. */
    public int size;
    /** Upper bound of the offsets in {@link #t} (stays valid when stages remove events). */
    public int maxT;

    /** Offsets are below 2^30 us (about 17.9 minutes), so stages can subtract times without overflow. */
    public static final int MAX_OFFSET_US = 1 << 30;

    /**
     * Creates an empty batch.
     *
     * @param capacity the maximum number of events the batch can hold, at least 1
     */
    public EventBatch(int capacity) {
        if (capacity < 1) {
            throw new IllegalArgumentException("capacity=" + capacity + " < 1");
        }
        x = new int[capacity];
        y = new int[capacity];
        t = new int[capacity];
        p = new byte[capacity];
    }

    /** The maximum number of events this batch holds. */
    public int capacity() {
        return x.length;
    }

    /** Empties the batch and sets the time base for the events to come. */
    public void reset(long timeBaseUs) {
        this.timeBaseUs = timeBaseUs;
        this.size = 0;
        this.maxT = 0;
    }

    /**
     * Appends one event given in absolute sensor time.
     *
     * @throws IllegalStateException if the batch is full
     * @throws IllegalArgumentException if the time is before the base or too far after it
     */
    public void add(int x, int y, long timeUs, int polarity) {
        if (size == this.x.length) {
            throw new IllegalStateException("batch full: capacity=" + this.x.length);
        }
        long offset = timeUs - timeBaseUs;
        if (offset < 0 || offset >= MAX_OFFSET_US) {
            throw new IllegalArgumentException(
                    "event time " + timeUs + "us outside [" + timeBaseUs + ", " + (timeBaseUs + MAX_OFFSET_US) + ")");
        }
        int i = size++;
        this.x[i] = x;
        this.y[i] = y;
        this.t[i] = (int) offset;
        if (offset > maxT) {
            maxT = (int) offset;
        }
        this.p[i] = polarity > 0 ? (byte) 1 : (byte) -1;
    }

    /** Absolute sensor time of event {@code i} in microseconds. */
    public long timeUs(int i) {
        return timeBaseUs + t[i];
    }

    /** Earliest event time in microseconds (a scan); {@link #timeBaseUs} if empty. */
    public long minTimeUs() {
        if (size == 0) {
            return timeBaseUs;
        }
        int min = t[0];
        for (int i = 1; i < size; i++) {
            min = Math.min(min, t[i]);
        }
        return timeBaseUs + min;
    }

    /** Copies event {@code from} to slot {@code to}; used by stages that compact the batch. */
    public void move(int from, int to) {
        x[to] = x[from];
        y[to] = y[from];
        t[to] = t[from];
        p[to] = p[from];
    }

    /** Copies the valid events of {@code other} into this batch, replacing its content. */
    public void copyFrom(EventBatch other) {
        if (other.size > capacity()) {
            throw new IllegalArgumentException("size=" + other.size + " > capacity=" + capacity());
        }
        System.arraycopy(other.x, 0, x, 0, other.size);
        System.arraycopy(other.y, 0, y, 0, other.size);
        System.arraycopy(other.t, 0, t, 0, other.size);
        System.arraycopy(other.p, 0, p, 0, other.size);
        timeBaseUs = other.timeBaseUs;
        size = other.size;
        maxT = other.maxT;
    }
}
