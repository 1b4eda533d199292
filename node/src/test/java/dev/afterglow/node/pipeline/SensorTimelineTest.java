package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class SensorTimelineTest {
    private static final long OFFSET = 1_000_000_000;
    private static final long MAX_AHEAD_US = 500_000;

    private final ClockMapper mapper = new ClockMapper();
    private final SensorTimeline timeline = new SensorTimeline(mapper, MAX_AHEAD_US);
    private long newest = Long.MIN_VALUE;

    /** A packet with newest event at sensor {@code t}, arriving at host {@code arrival}; observed if on the timeline. */
    private SensorTimeline.Verdict packet(long arrival, long t) {
        SensorTimeline.Verdict v = timeline.check(arrival, t, newest);
        if (v != SensorTimeline.Verdict.FUTURE && v != SensorTimeline.Verdict.PAST) {
            if (v == SensorTimeline.Verdict.RESYNC) {
                mapper.reset();
                newest = Long.MIN_VALUE;
            }
            mapper.observe(arrival, t);
            newest = Math.max(newest, t);
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
}
