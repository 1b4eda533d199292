package dev.afterglow.filters.denoise;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventLog;
import dev.afterglow.filters.RandomEventStream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link BackgroundActivityFilter} against a naive reference written from the published
 * definitions: pass an event if at least k of its 8 neighbours had an event within dT before it
 * (k = 1: T. Delbruck, "Frame-free dynamic digital vision", 2008; k > 1: S. Guo and T. Delbruck,
 * "Low cost and latency event camera background activity denoising", TPAMI 2022). Every event
 * stamps its pixel; pixels at the border have fewer neighbours.
 */
class BackgroundActivityFilterTest {

    /** Naive filter: long stamps, explicit bounds checks, no padding. */
    static final class NaiveBackgroundActivity {
        private final int width;
        private final int height;
        private final long windowUs;
        private final int support;
        private final long[] latest;
        private final boolean[] fired;

        NaiveBackgroundActivity(int width, int height, long windowUs, int support) {
            this.width = width;
            this.height = height;
            this.windowUs = windowUs;
            this.support = support;
            this.latest = new long[width * height];
            this.fired = new boolean[width * height];
        }

        boolean pass(int x, int y, long t) {
            int found = 0;
            for (int dy = -1; dy <= 1; dy++) {
                for (int dx = -1; dx <= 1; dx++) {
                    int nx = x + dx;
                    int ny = y + dy;
                    if ((dx == 0 && dy == 0) || nx < 0 || ny < 0 || nx >= width || ny >= height) {
                        continue;
                    }
                    int n = ny * width + nx;
                    if (fired[n] && t - latest[n] <= windowUs) {
                        found++;
                    }
                }
            }
            fired[y * width + x] = true;
            latest[y * width + x] = t;
            return found >= support;
        }
    }

    static EventLog[] runBoth(RandomEventStream s, int windowUs, int support) {
        return StageAgainstReference.run(s,
                new BackgroundActivityFilter(s.width, s.height, windowUs, support),
                new NaiveBackgroundActivity(s.width, s.height, windowUs, support)::pass);
    }

    @ParameterizedTest(name = "{0}x{1} seed {2} window {3}us support {4}")
    @CsvSource({
        "32, 24, 1, 2000, 1",
        "32, 24, 2, 100, 1",
        "32, 24, 3, 1000000, 1",
        "32, 24, 4, 2000, 2",
        "32, 24, 5, 5000, 3",
        "32, 24, 6, 20000, 4",
        "40, 17, 7, 2000, 1",
        "40, 17, 8, 3000, 2",
        "17, 40, 9, 10000, 3",
        "17, 40, 10, 50000, 4",
        "5, 3, 11, 5000, 1",
        "5, 3, 12, 50000, 3",
    })
    void shouldPassExactlyTheEventsTheNaiveFilterPasses(int w, int h, long seed, int windowUs, int support) {
        RandomEventStream s = RandomEventStream.builder(w, h, seed).disorder(0.02, 30).build();
        EventLog[] r = runBoth(s, windowUs, support);
        EventLog.assertSameEvents(r[0], r[1], "support " + support + " window " + windowUs + "us");
        assertTrue(r[0].size() > 0 && r[0].size() < s.size, "passed " + r[0].size() + " of " + s.size);
    }

    @Test
    void shouldCountOnlyNeighboursInsideTheSensorAtBordersAndCorners() {
        // A corner pixel has 3 neighbours and an edge pixel 5, so with all of them fresh a corner
        // event passes k <= 3 and fails k = 4, an edge event passes k <= 5 and fails k = 6.
        for (int k = 1; k <= 8; k++) {
            BackgroundActivityFilter f = new BackgroundActivityFilter(6, 4, 1000, k);
            EventBatch b = new EventBatch(64);
            b.reset(10_000);
            // Neighbours of corner (0,0) and of edge pixel (3,0), all at t=10000.
            int[][] around = {{1, 0}, {0, 1}, {1, 1}, {2, 0}, {4, 0}, {2, 1}, {3, 1}, {4, 1}};
            for (int[] a : around) {
                b.add(a[0], a[1], 10_000, 1);
            }
            b.add(0, 0, 10_500, 1);
            b.add(3, 0, 10_500, 1);
            f.process(b);
            NaiveBackgroundActivity naive = new NaiveBackgroundActivity(6, 4, 1000, k);
            for (int[] a : around) {
                naive.pass(a[0], a[1], 10_000);
            }
            boolean cornerPasses = naive.pass(0, 0, 10_500);
            boolean edgePasses = naive.pass(3, 0, 10_500);
            assertEquals(k <= 3, cornerPasses, "naive corner, k=" + k);
            assertEquals(k <= 5, edgePasses, "naive edge, k=" + k);
            boolean fastCorner = false;
            boolean fastEdge = false;
            for (int i = 0; i < b.size; i++) {
                if (b.timeUs(i) == 10_500) {
                    fastCorner |= b.x[i] == 0;
                    fastEdge |= b.x[i] == 3;
                }
            }
            assertEquals(cornerPasses, fastCorner, "corner, k=" + k);
            assertEquals(edgePasses, fastEdge, "edge, k=" + k);
        }
    }

    @Test
    void shouldMatchTheNaiveFilterAcrossLongGapsAndLateTimeBases() {
        RandomEventStream s = RandomEventStream.builder(12, 9, 13)
                .startUs((1L << 31) - 1_000_000_000L).activeUs(20_000_000).noiseHz(3).hot(2, 5, 40)
                .burstHz(20).edgeHz(0.5).gaps(6, 600_000_000L, 1_500_000_000L).batches(5000, 60_000_000L).build();
        for (int[] c : new int[][] {{2_000, 1}, {1_000_000, 1}, {500_000, 3}}) {
            EventLog[] r = runBoth(s, c[0], c[1]);
            EventLog.assertSameEvents(r[0], r[1], "support " + c[1] + " window " + c[0] + "us");
            assertTrue(r[0].size() > 0 && r[0].size() < s.size, "passed " + r[0].size() + " of " + s.size);
        }
    }
}
