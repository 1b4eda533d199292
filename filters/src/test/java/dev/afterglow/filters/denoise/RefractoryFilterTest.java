package dev.afterglow.filters.denoise;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventLog;
import dev.afterglow.filters.RandomEventStream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link RefractoryFilter} against a naive reference written from the method's definition
 * (drop an event if it follows the last passed event of the same pixel by less than the period;
 * common practice), with long absolute timestamps.
 */
class RefractoryFilterTest {

    /** Naive refractory filter: one long timestamp per pixel, no epoch, no padding. */
    static final class NaiveRefractory {
        private final int width;
        private final long periodUs;
        private final long[] lastPassed;
        private final boolean[] fired;

        NaiveRefractory(int width, int height, long periodUs) {
            this.width = width;
            this.periodUs = periodUs;
            this.lastPassed = new long[width * height];
            this.fired = new boolean[width * height];
        }

        boolean pass(int x, int y, long t) {
            int i = y * width + x;
            if (fired[i] && t - lastPassed[i] < periodUs) {
                return false;
            }
            fired[i] = true;
            lastPassed[i] = t;
            return true;
        }
    }

    static EventLog[] runBoth(RandomEventStream s, int periodUs) {
        return StageAgainstReference.run(s,
                new RefractoryFilter(s.width, s.height, periodUs),
                new NaiveRefractory(s.width, s.height, periodUs)::pass);
    }

    @ParameterizedTest(name = "{0}x{1} seed {2} period {3}us")
    @CsvSource({
        "32, 24, 1, 1",
        "32, 24, 2, 100",
        "32, 24, 3, 1000",
        "32, 24, 4, 50000",
        "32, 24, 5, 1000000",
        "40, 17, 6, 1000",
        "40, 17, 7, 20000",
        "17, 40, 8, 333",
    })
    void shouldPassExactlyTheEventsTheNaiveFilterPasses(int w, int h, long seed, int periodUs) {
        RandomEventStream s = RandomEventStream.builder(w, h, seed).disorder(0.02, 30).build();
        EventLog[] r = runBoth(s, periodUs);
        EventLog.assertSameEvents(r[0], r[1], "refractory " + periodUs + "us");
        // The stream must exercise both outcomes, or the comparison proves little.
        assertTrue(r[0].size() > 0 && r[0].size() < s.size, "passed " + r[0].size() + " of " + s.size);
    }

    @Test
    void shouldForgetNothingAcrossLongGapsAndLateTimeBases() {
        // Gaps of 10 to 25 minutes (beyond the 2^30 us int range of the stamps) and time bases up
        // to 60 s before their first event; a long period keeps many decisions near the boundary.
        RandomEventStream s = RandomEventStream.builder(12, 9, 11)
                .startUs((1L << 32) - 3_000_000_000L).activeUs(20_000_000).noiseHz(3).hot(2, 5, 40)
                .burstHz(20).edgeHz(0.5).gaps(6, 600_000_000L, 1_500_000_000L).batches(5000, 60_000_000L).build();
        for (int period : new int[] {1_000, 250_000, 1_000_000}) {
            EventLog[] r = runBoth(s, period);
            EventLog.assertSameEvents(r[0], r[1], "refractory " + period + "us");
            assertTrue(r[0].size() < s.size, "some events dropped");
        }
    }
}
