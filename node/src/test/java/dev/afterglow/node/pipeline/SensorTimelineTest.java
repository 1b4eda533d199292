package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class SensorTimelineTest {
    private static final long OFFSET = 1_000_000_000;
    private static final long MAX_AHEAD_US = 500_000;

    private final ClockMapper mapper = new ClockMapper();
    private final SensorTimeline timeline = new SensorTimeline(mapper, MAX_AHEAD_US);
    private long newest = Long.MIN_VALUE;
    private long newestArrival;

    /** A packet with newest event at sensor {@code t}, arriving at host {@code arrival}; observed if on the timeline. */
    private SensorTimeline.Verdict packet(long arrival, long t) {
        SensorTimeline.Verdict v = timeline.check(arrival, t, newest, newestArrival);
        if (v != SensorTimeline.Verdict.FUTURE && v != SensorTimeline.Verdict.PAST) {
            if (v == SensorTimeline.Verdict.RESYNC || v == SensorTimeline.Verdict.REANCHOR) {
                mapper.reset();
                newest = Long.MIN_VALUE;
            }
            mapper.observe(arrival, t);
            if (t >= newest) {
                newest = t;
                newestArrival = arrival;
            }
        }
        return v;
    }

    private long stream(long fromUs, long toUs) {
        for (long t = fromUs; t < toUs; t += 1_000) {
            assertEquals(SensorTimeline.Verdict.ON, packet(t + OFFSET + 500, t));
        }
        return toUs;
    }

    @Test
    void shouldRejectAPacketFarAheadAndKeepTheRealStream() {
        long t = stream(0, 2_000_000);
        assertEquals(SensorTimeline.Verdict.FUTURE, packet(t + OFFSET, t + 9_000_000));
        stream(t, t + 2_000_000);
    }

    @Test
    void shouldAcceptAPacketSlightlyAhead() {
        long t = stream(0, 1_000_000);
        assertEquals(SensorTimeline.Verdict.ON, packet(t + OFFSET, t + MAX_AHEAD_US - 10_000));
    }

    @Test
    void shouldRejectOnePacketFarInThePastWithoutRestarting() {
        long t = stream(0, 12_000_000);
        assertEquals(SensorTimeline.Verdict.PAST, packet(t + OFFSET, 1_000));
        stream(t, t + 1_000_000);
    }

    @Test
    void shouldResynchroniseAfterARunOfConsistentPacketsOnANewTimeline() {
        long t = stream(0, 12_000_000);
        // the sensor restarted its clock at 0 (12 s back: off the timeline): from now on sensor time = host time - (OFFSET + t)
        long restart = t;
        SensorTimeline.Verdict v = SensorTimeline.Verdict.FUTURE;
        int packets = 0;
        for (long s = 0; v != SensorTimeline.Verdict.RESYNC; s += 1_000) {
            v = packet(restart + s + OFFSET + 500, s);
            packets++;
            if (v != SensorTimeline.Verdict.RESYNC) {
                assertEquals(SensorTimeline.Verdict.PAST, v);
            }
        }
        assertEquals(SensorTimeline.RESYNC_SPAN_US / 1_000 + 1, packets, "resynchronised once the run spans the minimum time");
    }

    @Test
    void shouldNotResynchroniseWhileTheRealStreamInterleaves() {
        long t = stream(0, 1_000_000);
        for (int i = 0; i < 1_000; i++, t += 1_000) {
            assertEquals(SensorTimeline.Verdict.FUTURE, packet(t + OFFSET, t + 20_000_000));
            assertEquals(SensorTimeline.Verdict.ON, packet(t + OFFSET + 500, t));
        }
    }

    @Test
    void shouldResynchroniseAtOnceOnANewConnection() {
        long t = stream(0, 1_000_000);
        timeline.open();
        assertEquals(SensorTimeline.Verdict.RESYNC, packet(t + OFFSET, t + 60_000_000));
        assertEquals(SensorTimeline.Verdict.ON, packet(t + OFFSET + 1_000, t + 60_001_000));
    }

    @Test
    void shouldFollowAStreamWhoseFirstPacketsWereHeldUpAndThenCaughtUp() {
        // the first 1.5 s of packets arrive 0.8 s late; the sender then catches up in a burst and goes on on time
        long t = 0;
        for (; t < 1_500_000; t += 1_000) {
            assertEquals(SensorTimeline.Verdict.ON, packet(t + OFFSET + 800_000, t));
        }
        long burstHost = t + OFFSET + 800_000;
        for (; t < 2_300_000; t += 1_000) {
            assertEquals(SensorTimeline.Verdict.ON, packet(burstHost, t), "the catch-up burst follows on from the stream");
        }
        for (; t < 6_000_000; t += 1_000) {
            assertEquals(SensorTimeline.Verdict.ON, packet(t + OFFSET + 500, t), "on time again at " + t);
        }
    }

    @Test
    void shouldReanchorTheMappingAfterARunAheadThatDoesNotFollowTheStream() {
        long t = stream(0, 2_000_000);
        // the sensor's clock steps 2 s forward (re-synchronised), a second after its last packet
        long host = t + 1_000_000;
        SensorTimeline.Verdict v;
        int rejected = 0;
        long s = t + 3_000_000;
        while ((v = packet(host + OFFSET, s)) == SensorTimeline.Verdict.FUTURE) {
            rejected++;
            host += 1_000;
            s += 1_000;
        }
        assertEquals(SensorTimeline.Verdict.REANCHOR, v, "less than a restart ahead: only the mapping moves");
        assertEquals(SensorTimeline.RESYNC_SPAN_US / 1_000, rejected);
    }

    @Test
    void shouldLetAForgedPacketGainNoMoreThanTheOwnLead() {
        long t = stream(0, 2_000_000);
        // a forger that follows the stream's own latest packet closely is let in, but only just ahead of it
        assertEquals(SensorTimeline.Verdict.ON, packet(t + OFFSET, t + SensorTimeline.OWN_LEAD_US));
        // one that leans on the first to go further is held to the mapping's limit
        assertEquals(SensorTimeline.Verdict.FUTURE, packet(t + OFFSET, t + SensorTimeline.OWN_LEAD_US + MAX_AHEAD_US + 1));
    }
}
