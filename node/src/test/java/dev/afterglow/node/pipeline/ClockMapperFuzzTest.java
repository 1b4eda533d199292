package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.fuzz.FuzzTarget;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import dev.afterglow.filters.fuzz.FuzzInputs;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

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

    record Case(List<Packet> packets, long trueOffset, List<Long> forgedBins) {
    }

    @Property
    void noForgeryInTwoBinsMovesTheEstimateBelowTheTruth(@ForAll("cases") Case c) {
        List<Packet> packets = c.packets();
        long trueOffset = c.trueOffset();
        List<Long> forgedBins = c.forgedBins();
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
    Arbitrary<Case> cases() {
        return FuzzInputs.from(r -> {
            List<Packet> packets = new java.util.ArrayList<>();
            for (int n = 1 + r.nextInt(400); n > 0; n--) {
                long gap = r.nextInt(6) < 5 ? 100 + r.nextInt(19_900) : 20_000 + r.nextInt(2_980_000);
                long delay = r.nextInt(6) < 5 ? r.nextInt(2_001) : r.nextInt(200_001);
                long lead = r.nextInt(7) < 6 ? 0 : 1 + Math.floorMod(r.nextLong(), 1L << 50);
                packets.add(new Packet(gap, delay, lead));
            }
            List<Long> bins = new java.util.ArrayList<>();
            for (int n = r.nextInt(7); n > 0; n--) { // residues mod 64 of the bins forgeries may land in
                long b = r.nextInt(64);
                if (!bins.contains(b)) {
                    bins.add(b);
                }
            }
            long trueOffset = Math.floorMod(r.nextLong(), 2_000_000_000_001L) - 1_000_000_000_000L;
            return new Case(packets, trueOffset, bins);
        });
    }
}
