package dev.afterglow.filters;

import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Sparse streams over hours of sensor time for the long-run checks: a small sensor, about 80
 * minutes of sparse activity (noise, two slow hot pixels, bursts, edges) cut by gaps of 3 to 25
 * minutes with no events, starting 20 minutes before 2^31 us so that the run crosses both 2^31 us
 * and 2^32 us of sensor time.
 */
public final class LongRunStreams {
    /** Two to the 31 microseconds (about 35.8 minutes). */
    public static final long T31 = 1L << 31;
    /** Two to the 32 microseconds (about 71.6 minutes). */
    public static final long T32 = 1L << 32;

    private LongRunStreams() {
    }

    /** A seeded sparse stream of more than 2.5 hours that crosses 2^31 us and 2^32 us. */
    public static RandomEventStream hours(int width, int height, long seed) {
        RandomEventStream s = RandomEventStream.builder(width, height, seed)
                .startUs(T31 - 1_200_000_000L)
                .activeUs(4_800_000_000L)
                .noiseHz(0.02)
                .hot(2, 2, 20)
                .burstHz(0.3)
                .edgeHz(0.01)
                .gaps(8, 180_000_000L, 1_500_000_000L)
                .batches(5000, 60_000_000L)
                .build();
        long first = s.t[0];
        long last = s.t[s.size - 1];
        assertTrue(last - first > 9_000_000_000L, "run of " + (last - first) / 60e6 + " minutes");
        assertTrue(first < T31 && last > T32, "run must cross 2^31 us and 2^32 us");
        return s;
    }
}
