package dev.afterglow.filters.denoise;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventLog;
import dev.afterglow.filters.RandomEventStream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link PatchSupportFilter} against a naive reference written from the definition: pass an
 * event if the pixels of the (2r+1)x(2r+1) patch around it (those inside the sensor, not its own)
 * that had an event within dT before it weigh at least k together, a pixel at Chebyshev distance d
 * weighing r + 1 - d; every event stamps its pixel. With r = 1 every weight is 1 and this is the
 * k-of-8 correlation filter of Guo and Delbruck (TPAMI 2022), so the stage must also agree with
 * {@link BackgroundActivityFilter} there.
 */
class PatchSupportFilterTest {

    /** Naive filter: long stamps, explicit bounds checks, no padding, the whole patch scanned in row order. */
    static final class NaivePatchSupport {
        private final int width;
        private final int height;
        /** The window; the adaptive test sets it to the fast filter's before each batch. */
        long windowUs;
        private final int support;
        private final int radius;
        private final long[] latest;
        private final boolean[] fired;

        NaivePatchSupport(int width, int height, long windowUs, int support, int radius) {
            this.width = width;
            this.height = height;
            this.windowUs = windowUs;
            this.support = support;
            this.radius = radius;
            this.latest = new long[width * height];
            this.fired = new boolean[width * height];
        }

        boolean pass(int x, int y, long t) {
            int found = 0;
            for (int dy = -radius; dy <= radius; dy++) {
                for (int dx = -radius; dx <= radius; dx++) {
                    int nx = x + dx;
                    int ny = y + dy;
                    if ((dx == 0 && dy == 0) || nx < 0 || ny < 0 || nx >= width || ny >= height) {
                        continue;
                    }
                    int n = ny * width + nx;
                    if (fired[n] && t - latest[n] <= windowUs) {
                        found += radius + 1 - Math.max(Math.abs(dx), Math.abs(dy));
                    }
                }
            }
            fired[y * width + x] = true;
            latest[y * width + x] = t;
            return found >= support;
        }
    }

    static EventLog[] runBoth(RandomEventStream s, int windowUs, int support, int radius) {
        return StageAgainstReference.run(s,
                new PatchSupportFilter(s.width, s.height, windowUs, support, radius),
                new NaivePatchSupport(s.width, s.height, windowUs, support, radius)::pass);
    }

    @ParameterizedTest(name = "{0}x{1} seed {2} window {3}us support {4} radius {5}")
    @CsvSource({
        "32, 24, 1, 2000, 1, 2",
        "32, 24, 2, 6000, 6, 2",
        "32, 24, 3, 1000000, 6, 2",
        "32, 24, 4, 20000, 11, 2",
        "32, 24, 5, 5000, 2, 1",
        "32, 24, 6, 50000, 20, 3",
        "40, 17, 7, 6000, 5, 2",
        "40, 17, 8, 3000, 7, 3",
        "17, 40, 9, 10000, 3, 2",
        "17, 40, 10, 100, 1, 2",
        "5, 3, 11, 50000, 6, 2",
        "3, 5, 12, 50000, 9, 3",
    })
    void shouldPassExactlyTheEventsTheNaiveFilterPasses(int w, int h, long seed, int windowUs, int support, int radius) {
        RandomEventStream s = RandomEventStream.builder(w, h, seed).disorder(0.02, 30).build();
        EventLog[] r = runBoth(s, windowUs, support, radius);
        EventLog.assertSameEvents(r[0], r[1], "support " + support + " radius " + radius + " window " + windowUs + "us");
        assertTrue(r[0].size() > 0 && r[0].size() < s.size, "passed " + r[0].size() + " of " + s.size);
    }

    @ParameterizedTest(name = "seed {0} window {1}us support {2}")
    @CsvSource({"21, 2000, 1", "22, 5000, 2", "23, 20000, 3", "24, 100000, 5"})
    void shouldAgreeWithTheCorrelationFilterOnA3x3Patch(long seed, int windowUs, int support) {
        RandomEventStream s = RandomEventStream.builder(30, 20, seed).disorder(0.02, 30).build();
        EventLog got = new EventLog();
        EventLog want = new EventLog();
        PatchSupportFilter patch = new PatchSupportFilter(30, 20, windowUs, support, 1);
        BackgroundActivityFilter correlation = new BackgroundActivityFilter(30, 20, windowUs, support);
        EventBatch a = s.newBatch();
        EventBatch b = s.newBatch();
        for (int k = 0; k < s.batches; k++) {
            s.fill(k, a);
            s.fill(k, b);
            patch.process(a);
            correlation.process(b);
            got.addAll(a);
            want.addAll(b);
        }
        EventLog.assertSameEvents(want, got, "radius 1 vs correlation, support " + support);
        assertTrue(want.size() > 0 && want.size() < s.size, "passed " + want.size() + " of " + s.size);
    }

    @Test
    void shouldWeighOnlyPatchPixelsInsideTheSensorAtCornersAndEdges() {
        // Radius 2, all patch pixels fresh. Corner (0,0): 3 inner pixels x 2 + 5 outer x 1 = 11.
        // Edge (4,0) of a 9-wide sensor: 5 inner x 2 + 9 outer x 1 = 19. So a corner event passes
        // k <= 11, an edge event k <= 19 (of 32 for a whole patch).
        int w = 9;
        int h = 6;
        assertEquals(32, PatchSupportFilter.maxSupport(2));
        for (int k = 1; k <= 32; k++) {
            PatchSupportFilter f = new PatchSupportFilter(w, h, 1000, k, 2);
            EventBatch b = new EventBatch(256);
            b.reset(10_000);
            for (int y = 0; y < h; y++) {
                for (int x = 0; x < w; x++) {
                    if (!((x == 0 && y == 0) || (x == 4 && y == 0))) {
                        b.add(x, y, 10_000, 1);
                    }
                }
            }
            b.add(0, 0, 10_500, 1);
            b.add(4, 0, 10_500, -1);
            f.process(b);
            boolean corner = false;
            boolean edge = false;
            for (int i = 0; i < b.size; i++) {
                if (b.timeUs(i) == 10_500) {
                    corner |= b.x[i] == 0;
                    edge |= b.x[i] == 4;
                }
            }
            assertEquals(k <= 11, corner, "corner, k=" + k);
            assertEquals(k <= 19, edge, "edge, k=" + k);
        }
    }

    @Test
    void shouldGiveThePatchItsWholeWeight() {
        // Ring d holds 8d pixels weighing r + 1 - d.
        assertEquals(8, PatchSupportFilter.maxSupport(1));
        assertEquals(2 * 8 + 1 * 16, PatchSupportFilter.maxSupport(2));
        assertEquals(3 * 8 + 2 * 16 + 1 * 24, PatchSupportFilter.maxSupport(3));
    }

    @Test
    void shouldMatchTheNaiveFilterAcrossLongGapsAndLateTimeBases() {
        RandomEventStream s = RandomEventStream.builder(12, 9, 13)
                .startUs((1L << 31) - 1_000_000_000L).activeUs(20_000_000).noiseHz(3).hot(2, 5, 40)
                .burstHz(20).edgeHz(0.5).gaps(6, 600_000_000L, 1_500_000_000L).batches(5000, 60_000_000L).build();
        for (int[] c : new int[][] {{6_000, 6, 2}, {1_000_000, 1, 2}, {500_000, 25, 3}}) {
            EventLog[] r = runBoth(s, c[0], c[1], c[2]);
            EventLog.assertSameEvents(r[0], r[1], "support " + c[1] + " radius " + c[2] + " window " + c[0] + "us");
            assertTrue(r[0].size() > 0 && r[0].size() < s.size, "passed " + r[0].size() + " of " + s.size);
        }
    }

    @ParameterizedTest(name = "seed {0} fill {1}")
    @CsvSource({"31, 0.05", "32, 0.3", "33, 0.8"})
    void shouldPassExactlyWhatTheNaiveFilterPassesWithTheWindowTheRateSet(long seed, double fill) {
        // The rate-scaled window changes between batches only: within a batch the stage is the
        // fixed-window filter with the window in force, so the naive filter given that window must agree.
        RandomEventStream s = RandomEventStream.builder(32, 24, seed).disorder(0.02, 30).build();
        PatchSupportFilter fast = new PatchSupportFilter(32, 24, 50_000, 6, 2, fill);
        NaivePatchSupport naive = new NaivePatchSupport(32, 24, 50_000, 6, 2);
        java.util.Set<Integer> windows = new java.util.HashSet<>();
        EventLog[] r = StageAgainstReference.run(s, fast, (x, y, t) -> {
            naive.windowUs = fast.windowUs();
            windows.add(fast.windowUs());
            return naive.pass(x, y, t);
        });
        EventLog.assertSameEvents(r[0], r[1], "fill " + fill);
        assertTrue(windows.size() > 3, "the window followed the rate: " + windows.size() + " different windows");
    }

    @ParameterizedTest(name = "{0} Hz per pixel")
    @CsvSource({"20, 7500", "5, 24000", "0.5, 24000", "500, 1000"})
    void shouldSetTheWindowToFillOverTheMeanRatePerPixel(double hz, int expectedUs) {
        // Uniform Poisson noise at a known rate per pixel: after a few time constants the window is
        // fill / rate (0.15 / 20 Hz = 7.5 ms), capped by the configured 24 ms and floored at 1 ms.
        int w = 64;
        int h = 48;
        PatchSupportFilter f = new PatchSupportFilter(w, h, 24_000, 6, 2, 0.15);
        java.util.SplittableRandom random = new java.util.SplittableRandom(5);
        EventBatch b = new EventBatch(1 << 16);
        double perBatch = hz * w * h * 1e-3; // events per 1 ms batch
        for (long ms = 0; ms < 2_000; ms++) {
            b.reset(ms * 1000);
            // Poisson count by summing exponential gaps over the batch's millisecond.
            double at = -Math.log(1 - random.nextDouble()) / perBatch;
            while (at < 1) {
                b.add(random.nextInt(w), random.nextInt(h), ms * 1000 + (long) (at * 1000), 1);
                at += -Math.log(1 - random.nextDouble()) / perBatch;
            }
            f.process(b);
        }
        assertEquals(expectedUs, f.windowUs(), expectedUs * 0.08, hz + " Hz per pixel");
        assertTrue(f.describe().contains("fill=0.15"), f.describe());
    }

    @Test
    void shouldRefuseParametersOutsideTheirLimitsNamingThem() {
        assertMessage(() -> new PatchSupportFilter(8, 8, 1000, 3, 2, -1), "patch-support.fill=-1.0");
        assertMessage(() -> new PatchSupportFilter(8, 8, 0, 3, 2), "patch-support.window=0us");
        assertMessage(() -> new PatchSupportFilter(8, 8, 1_000_001, 3, 2), "patch-support.window=1000001us");
        assertMessage(() -> new PatchSupportFilter(8, 8, 1000, 3, 0), "patch-support.radius=0");
        assertMessage(() -> new PatchSupportFilter(8, 8, 1000, 3, 4), "patch-support.radius=4");
        assertMessage(() -> new PatchSupportFilter(8, 8, 1000, 0, 2), "patch-support.support=0");
        assertMessage(() -> new PatchSupportFilter(8, 8, 1000, 9, 1), "patch-support.support=9 outside [1, 8]");
        assertMessage(() -> new PatchSupportFilter(8, 8, 1000, 33, 2), "patch-support.support=33 outside [1, 32]");
        assertMessage(() -> new PatchSupportFilter(8, 8, 1000, 81, 3), "patch-support.support=81 outside [1, 80]");
    }

    private static void assertMessage(org.junit.jupiter.api.function.Executable build, String part) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, build);
        assertTrue(e.getMessage().contains(part), e.getMessage());
    }
}
