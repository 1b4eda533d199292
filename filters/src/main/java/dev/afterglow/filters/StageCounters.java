package dev.afterglow.filters;

import java.util.concurrent.atomic.AtomicLong;

/**
 * Events in and out of one stage. Written once per batch by the owning thread (release store) and
 * readable from any thread, so metrics can be harvested without locks.
 */
public final class StageCounters {
    private final AtomicLong in = new AtomicLong();
    private final AtomicLong out = new AtomicLong();

    /** Records one processed batch: {@code seen} events entered, {@code passed} left. */
    public void record(int seen, int passed) {
        // Single writer: a plain read plus a release store is enough and avoids a locked add.
        in.setRelease(in.getPlain() + seen);
        out.setRelease(out.getPlain() + passed);
    }

    /** Events that entered the stage. */
    public long eventsIn() {
        return in.getAcquire();
    }

    /** Events that left the stage (for a reconstruction: events applied to its state). */
    public long eventsOut() {
        return out.getAcquire();
    }

    /** Events the stage removed. */
    public long eventsRemoved() {
        return eventsIn() - eventsOut();
    }
}
