package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;

/**
 * A cursor over the batches of a {@link SceneEvents}, endlessly: after the last batch it starts
 * again with every time shifted by one more period, so sensor time only moves forward and the
 * stages' per-pixel state stays in steady state. One per benchmark thread.
 */
final class Replay {
    private final SceneEvents events;
    private final int count;
    private int next;
    private long nextShiftUs;
    private int current;
    private long shiftUs;

    Replay(SceneEvents events) {
        this.events = events;
        this.count = events.batches.length;
    }

    /** Moves to the next batch (wrapping with a time shift) and returns its index. */
    int advance() {
        current = next;
        shiftUs = nextShiftUs;
        if (++next == count) {
            next = 0;
            nextShiftUs += events.periodUs;
        }
        return current;
    }

    /** Time shift of the current batch. */
    long shiftUs() {
        return shiftUs;
    }

    /** Copies the current batch into {@code work} with its time base shifted for this replay. */
    void copyCurrent(EventBatch work) {
        work.copyFrom(events.batches[current]);
        work.timeBaseUs += shiftUs;
    }

    /**
     * Copies events {@code [from, to)} of the current batch into {@code work} (same time base and
     * offsets, shifted for this replay); the cost equals {@link EventBatch#copyFrom} on that many events.
     */
    void copyCurrent(int from, int to, EventBatch work) {
        EventBatch src = events.batches[current];
        int n = to - from;
        System.arraycopy(src.x, from, work.x, 0, n);
        System.arraycopy(src.y, from, work.y, 0, n);
        System.arraycopy(src.t, from, work.t, 0, n);
        System.arraycopy(src.p, from, work.p, 0, n);
        work.timeBaseUs = src.timeBaseUs + shiftUs;
        work.size = n;
        work.maxT = src.maxT; // an upper bound of the copied offsets, as EventBatch requires
    }
}
