package dev.afterglow.node.stats;

import java.util.concurrent.atomic.AtomicLongArray;

/**
 * Values of the {@link NodeCounter}s of one scope (a sensor or the node). Lock-free; added to per
 * packet or per frame, never per event. Readable from any thread.
 */
public final class Counters {
    private final AtomicLongArray values = new AtomicLongArray(NodeCounter.values().length);

    /** Adds {@code n} to {@code counter}. */
    public void add(NodeCounter counter, long n) {
        if (n != 0) {
            values.getAndAdd(counter.ordinal(), n);
        }
    }

    /** Adds one to {@code counter}. */
    public void increment(NodeCounter counter) {
        values.getAndIncrement(counter.ordinal());
    }

    /** Current value. */
    public long get(NodeCounter counter) {
        return values.get(counter.ordinal());
    }
}
