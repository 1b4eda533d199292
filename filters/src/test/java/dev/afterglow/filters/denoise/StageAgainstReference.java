package dev.afterglow.filters.denoise;

import static org.junit.jupiter.api.Assertions.assertEquals;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventLog;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.RandomEventStream;

/**
 * Runs a denoise stage batch by batch over a seeded stream beside a naive per-event reference
 * and returns {@code {expected, got}} for {@link EventLog#assertSameEvents}; also checks the
 * stage's in and out counters against the stream and the reference.
 */
final class StageAgainstReference {
    /** A reference that decides each event alone, in stream order. */
    @FunctionalInterface
    interface Reference {
        boolean pass(int x, int y, long t);
    }

    private StageAgainstReference() {
    }

    static EventLog[] run(RandomEventStream s, EventStage fast, Reference naive) {
        EventLog got = new EventLog();
        EventLog want = new EventLog();
        EventBatch batch = s.newBatch();
        for (int b = 0; b < s.batches; b++) {
            s.fill(b, batch);
            fast.process(batch);
            got.addAll(batch);
            for (int i = s.batchFrom(b); i < s.batchTo(b); i++) {
                if (naive.pass(s.x[i], s.y[i], s.t[i])) {
                    want.add(s, i);
                }
            }
        }
        assertEquals(s.size, fast.counters().eventsIn(), "events in");
        assertEquals(want.size(), fast.counters().eventsOut(), "events out");
        return new EventLog[] {want, got};
    }
}
