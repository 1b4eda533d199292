package dev.afterglow.filters.denoise;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventLog;
import dev.afterglow.filters.LongRunStreams;
import dev.afterglow.filters.RandomEventStream;
import org.junit.jupiter.api.Test;

/**
 * Over more than 2.5 hours of sensor time (crossing 2^31 us and 2^32 us, with gaps of minutes,
 * some longer than the 2^30 us an int stamp spans), the refractory and background-activity filters,
 * whose int stamps are moved to a new epoch now and then, must pass exactly the events their naive
 * long-time references pass.
 */
class LongRunDenoiseTest {

    @Test
    void shouldMatchTheNaiveRefractoryFilterForHours() {
        RandomEventStream s = LongRunStreams.hours(16, 12, 51);
        for (int period : new int[] {1_000, 200_000, 1_000_000}) {
            EventLog[] r = RefractoryFilterTest.runBoth(s, period);
            EventLog.assertSameEvents(r[0], r[1], "refractory " + period + "us");
            assertTrue(r[0].size() > 0 && r[0].size() < s.size, "passed " + r[0].size() + " of " + s.size);
        }
    }

    @Test
    void shouldMatchTheNaiveBackgroundActivityFilterForHours() {
        RandomEventStream s = LongRunStreams.hours(16, 12, 52);
        for (int[] c : new int[][] {{2_000, 1}, {1_000_000, 1}, {300_000, 2}, {1_000_000, 4}}) {
            EventLog[] r = BackgroundActivityFilterTest.runBoth(s, c[0], c[1]);
            EventLog.assertSameEvents(r[0], r[1], "support " + c[1] + " window " + c[0] + "us");
            assertTrue(r[0].size() > 0 && r[0].size() < s.size, "passed " + r[0].size() + " of " + s.size);
        }
    }
}
