package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

class ClockMapperTest {
    private static final long OFFSET = 5_000_000; // sensor clock = host clock - 5 s

    /** Feeds packets every {@code stepUs} for {@code spanUs}, each {@code delayUs} after its newest event. */
    private static long feed(ClockMapper m, long fromUs, long spanUs, long stepUs, long delayUs) {
        long t = fromUs;
        for (; t < fromUs + spanUs; t += stepUs) {
            m.observe(t + OFFSET + delayUs, t);
        }
        return t;
    }

    @Test
    void shouldMapWithTheFastestPacketsDelay() {
        ClockMapper m = new ClockMapper();
        assertFalse(m.ready());
        // packets arrive 3, 1 and 7 ms after their newest event, all within one bin
        m.observe(OFFSET + 10_000 + 3_000, 10_000);
        m.observe(OFFSET + 20_000 + 1_000, 20_000);
        m.observe(OFFSET + 30_000 + 7_000, 30_000);
        assertTrue(m.ready());
        assertEquals(OFFSET + 1_000, m.offsetUs());
        assertEquals(OFFSET + 41_000, m.toHostUs(40_000));
    }

    @Test
    void shouldNotBeDraggedByOnePacketStampedAhead() {
        ClockMapper m = new ClockMapper();
        long t = feed(m, 0, 3_000_000, 1_000, 2_000);
        assertEquals(OFFSET + 2_000, m.offsetUs());
        // one packet claims to be 9 s newer than it is: its offset is 9 s smaller
        m.observe(t + OFFSET + 2_000, t + 9_000_000);
        assertEquals(OFFSET + 2_000, m.offsetUs(), "one packet must not move the mapping");
        feed(m, t + 1_000, 3_000_000, 1_000, 2_000);
        assertEquals(OFFSET + 2_000, m.offsetUs());
    }

    @Test
    void shouldFollowAFasterPathOnceSeveralBinsAgree() {
        ClockMapper m = new ClockMapper();
        long t = feed(m, 0, 3_000_000, 1_000, 5_000);
        assertEquals(OFFSET + 5_000, m.offsetUs());
        // the network gets faster: packets now arrive 1 ms after their newest event
        // host bins are aligned to BIN_US: these packets fall in exactly two of them
        t = feed(m, t, ClockMapper.BIN_US * 2 - 2_000, 1_000, 1_000);
        assertEquals(OFFSET + 5_000, m.offsetUs(), "two bins are not enough support");
        feed(m, t, ClockMapper.BIN_US * 2, 1_000, 1_000);
        assertEquals(OFFSET + 1_000, m.offsetUs());
    }

    @Test
    void shouldFollowSlowDriftWithinTheWindow() {
        ClockMapper m = new ClockMapper();
        long t = feed(m, 0, 2_000_000, 1_000, 1_000);
        // from now on the sensor's clock runs 3 ms behind: offsets grow by 3 ms
        long windowUs = ClockMapper.BIN_US * ClockMapper.BINS;
        for (long end = t + windowUs + ClockMapper.BIN_US; t < end; t += 1_000) {
            m.observe(t + OFFSET + 4_000, t);
        }
        assertEquals(OFFSET + 4_000, m.offsetUs(), "bins older than the window are forgotten");
    }

    @Test
    void shouldKeepTheLastEstimateWhileNoPacketsArrive() {
        ClockMapper m = new ClockMapper();
        feed(m, 0, 2_000_000, 1_000, 1_000);
        assertEquals(OFFSET + 1_000, m.offsetUs());
        assertEquals(OFFSET + 1_000 + 100_000_000, m.toHostUs(100_000_000), "quiet sensor: mapping unchanged");
        m.reset();
        assertFalse(m.ready());
    }
}
