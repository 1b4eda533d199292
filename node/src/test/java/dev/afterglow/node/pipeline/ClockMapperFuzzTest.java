package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.fuzz.FuzzTarget;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.constraints.LongRange;

/**
 * Fuzz target for the clock mapping ({@link ClockMapper}): honest packets arrive some delay
 * (>= 0) after their newest event, at irregular intervals; forged ones claim any time at all, but
 * fall in at most two of the mapping's bins. Invariants: the estimate never claims a packet arrived
 * before it was sent (it is at least the true offset) while no forgery lies inside the window, and
 * with forgeries it is never below the true offset nor above the honest packets' third-best bin.
 */
@FuzzTarget
class ClockMapperFuzzTest {

    record Packet(long gapUs, long delayUs, long forgedLeadUs) {
    }

    @Property
    void noForgeryInTwoBinsMovesTheEstimateBelowTheTruth(@ForAll("packets") List<Packet> packets,
            @ForAll @LongRange(min = -1_000_000_000_000L, max = 1_000_000_000_000L) long trueOffset,
            @ForAll("bins") List<Long> forgedBins) {
        ClockMapper m = new ClockMapper();
        long host = 1_000_000_000L;
        Map<Long, Long> honestMin = new TreeMap<>();
        for (Packet p : packets) {
            host += p.gapUs();
            long bin = Math.floorDiv(host, ClockMapper.BIN_US);
            boolean forge = p.forgedLeadUs() != 0 && forgedBins.contains(Math.floorMod(bin, 64L));
            long sensor = host - trueOffset - p.delayUs();
            if (forge) {
                m.observe(host, sensor + p.forgedLeadUs()); // claims its events are newer than they are
            } else {
                m.observe(host, sensor);
                honestMin.merge(bin, p.delayUs(), Math::min);
            }
            long now = bin;
            long[] inWindow = honestMin.entrySet().stream().filter(e -> e.getKey() > now - ClockMapper.BINS)
                    .mapToLong(Map.Entry::getValue).sorted().toArray();
            int forgedInWindow = 0;
            for (long b = now - ClockMapper.BINS + 1; b <= now; b++) {
                if (forgedBins.contains(Math.floorMod(b, 64L))) {
                    forgedInWindow++;
                }
            }
            if (forgedInWindow <= 2 && inWindow.length >= 3) {
                assertTrue(m.offsetUs() >= trueOffset, "estimate below the truth: " + (m.offsetUs() - trueOffset));
                assertTrue(m.offsetUs() <= trueOffset + inWindow[2],
                        "estimate above the honest third-best bin: " + Arrays.toString(inWindow));
            }
        }
    }

    @Provide
    Arbitrary<List<Packet>> packets() {
        Arbitrary<Long> gaps = Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(5, Arbitraries.longs().between(100, 20_000)),
                net.jqwik.api.Tuple.of(1, Arbitraries.longs().between(20_000, 3_000_000)));
        Arbitrary<Long> delays = Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(5, Arbitraries.longs().between(0, 2_000)),
                net.jqwik.api.Tuple.of(1, Arbitraries.longs().between(0, 200_000)));
        Arbitrary<Long> leads = Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(6, Arbitraries.just(0L)),
                net.jqwik.api.Tuple.of(1, Arbitraries.longs().between(1, 1L << 50)));
        return net.jqwik.api.Combinators.combine(gaps, delays, leads).as(Packet::new).list().ofMinSize(1).ofMaxSize(400);
    }

    /** Bins (mod 64) in which forged packets may land; the invariant is checked where a window holds at most two. */
    @Provide
    Arbitrary<List<Long>> bins() {
        return Arbitraries.longs().between(0, 63).list().ofMaxSize(6).uniqueElements();
    }
}
