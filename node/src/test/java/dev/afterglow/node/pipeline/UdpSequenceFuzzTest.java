package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.fuzz.FuzzTarget;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import dev.afterglow.filters.fuzz.FuzzInputs;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * Fuzz target for the UDP sequence window ({@link UdpSequence}): a sender's unsigned 64-bit
 * numbers starting anywhere in the range (wrapping past 2^64 - 1 included), with gaps, reordering
 * and duplicates, and stray values far from the stream (never two in a row) interleaved.
 * Invariants: no number is applied twice between resynchronisations; every packet that is newer
 * than all before it and less than the resync distance ahead is applied, whatever strays came
 * before it; lost counts are never negative and never exceed the numbers skipped.
 */
@FuzzTarget
class UdpSequenceFuzzTest {
    private static final long STRAY = Long.MIN_VALUE;

    record Case(List<Long> steps, long start, long strayBase) {
    }

    @Property
    void noNumberTwiceAndNoStrayBlindsTheStream(@ForAll("cases") Case c) {
        List<Long> steps = c.steps();
        long start = c.start();
        long strayBase = c.strayBase();
        UdpSequence window = new UdpSequence();
        Set<Long> applied = new HashSet<>();
        long newest = start;
        boolean first = true;
        boolean lastWasStray = false;
        long lost = 0;
        long skipped = 0;
        for (long step : steps) {
            boolean stray = step == STRAY && !lastWasStray && !first;
            long seq;
            boolean fresh;
            if (stray) {
                seq = strayBase | (1L << 40); // at least 2^40 away from a stream that moves < 2^21 in total ...
                seq = newest + (seq == 0 ? 1L << 40 : seq);
                if (Math.abs(seq - newest) <= UdpSequence.MAX_JUMP) {
                    seq += 1L << 41; // ... so never within the resync distance by accident
                }
                fresh = false;
            } else {
                long s = step == STRAY ? 1 : step;
                seq = newest + s;
                fresh = first || s > 0;
                if (fresh) {
                    skipped += first ? 0 : s - 1;
                    newest = seq;
                }
            }
            UdpSequence.Outcome o = window.accept(seq);
            if (window.takeResyncs() > 0) {
                applied.clear();
            }
            long l = window.takeLost();
            assertTrue(l >= 0);
            lost += l;
            if (o == UdpSequence.Outcome.NEXT || o == UdpSequence.Outcome.REORDERED) {
                assertTrue(applied.add(seq), "applied twice: " + Long.toUnsignedString(seq));
            }
            if (fresh) {
                assertEquals(UdpSequence.Outcome.NEXT, o, "an in-order packet after " + (lastWasStray ? "a stray" : "the stream"));
            }
            lastWasStray = stray;
            first = false;
        }
        assertTrue(lost <= skipped, "lost " + lost + " > skipped " + skipped);
    }

    @Provide
    Arbitrary<Case> cases() {
        return FuzzInputs.from(r -> {
            List<Long> steps = new java.util.ArrayList<>();
            for (int n = 1 + r.nextInt(300); n > 0; n--) {
                int kind = r.nextInt(28);
                steps.add(kind < 20 ? 1L : kind < 23 ? 2 + r.nextInt(69) : kind < 25 ? -r.nextInt(71)
                        : kind < 26 ? 70 + r.nextInt((int) UdpSequence.MAX_JUMP - 69) : STRAY);
            }
            // start near 0, 2^63 and 2^64 - 1 (the unsigned edges), or anywhere
            return new Case(steps, FuzzInputs.near(r, 400L, 0L, Long.MIN_VALUE, -1L), r.nextLong());
        });
    }
}
