package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.fuzz.FuzzTarget;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.Tuple;

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

    @Property
    void noNumberTwiceAndNoStrayBlindsTheStream(@ForAll("steps") List<Long> steps, @ForAll long start,
            @ForAll long strayBase) {
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
    Arbitrary<List<Long>> steps() {
        Arbitrary<Long> step = Arbitraries.frequencyOf(
                Tuple.of(20, Arbitraries.just(1L)),
                Tuple.of(3, Arbitraries.longs().between(2, 70)),
                Tuple.of(2, Arbitraries.longs().between(-70, 0)),
                Tuple.of(1, Arbitraries.longs().between(70, UdpSequence.MAX_JUMP)),
                Tuple.of(2, Arbitraries.just(STRAY)));
        return step.list().ofMinSize(1).ofMaxSize(300);
    }
}
