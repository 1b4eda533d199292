package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

class ClockMapperTest {

    @Test
    void shouldMapWithTheFastestPacketsDelay() {
        ClockMapper m = new ClockMapper();
        assertFalse(m.ready());
        // sensor clock = host clock - 5 s; packets arrive 3, 1 and 7 ms after their newest event
        m.observe(5_000_000 + 10_000 + 3_000, 10_000);
        m.observe(5_000_000 + 20_000 + 1_000, 20_000);
        m.observe(5_000_000 + 30_000 + 7_000, 30_000);
        assertTrue(m.ready());
        assertEquals(5_001_000, m.offsetUs());
        assertEquals(5_041_000, m.toHostUs(40_000));
    }

    @Test
    void shouldFollowDriftAfterTwoWindows() {
        ClockMapper m = new ClockMapper();
        m.observe(1_000, 0); // offset 1 ms
        // the sensor clock drifts: 2 ms later offset from 10 s on
        m.observe(10_002_000, 10_000_000);
        assertEquals(1_000, m.offsetUs(), "previous window still remembered");
        m.observe(20_003_000, 20_001_000);
        assertEquals(2_000, m.offsetUs(), "the old minimum has been forgotten");
    }
}
