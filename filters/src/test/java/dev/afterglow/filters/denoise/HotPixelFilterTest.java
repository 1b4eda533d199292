package dev.afterglow.filters.denoise;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventLog;
import dev.afterglow.filters.RandomEventStream;
import java.util.function.IntPredicate;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link HotPixelFilter} against a naive reference of its documented rule: a learning window
 * opens at the first event after construction or a relearn request; a pixel is hot when its count
 * over the window exceeds max(factor * mean count, minRate * window); events during learning pass
 * under the previous mask. Masking pixels that fire far above the rest is common practice.
 */
class HotPixelFilterTest {

    /** Naive hot-pixel filter: long times, a fresh mask array per learning window. */
    static final class NaiveHotPixel {
        private final int width;
        private final int pixels;
        private final long learnUs;
        private final double factor;
        private final double minRateHz;
        private boolean[] mask;
        private long[] counts;
        private boolean relearnAtNextBatch = true;
        private boolean learning;
        private boolean windowOpen;
        private long windowStartUs;
        long droppedWhileLearning;

        NaiveHotPixel(int width, int height, long learnUs, double factor, double minRateHz) {
            this.width = width;
            this.pixels = width * height;
            this.learnUs = learnUs;
            this.factor = factor;
            this.minRateHz = minRateHz;
            this.mask = new boolean[pixels];
        }

        void requestRelearn() {
            relearnAtNextBatch = true;
        }

        void startBatch() {
            if (relearnAtNextBatch) {
                relearnAtNextBatch = false;
                learning = true;
                windowOpen = false;
                counts = new long[pixels];
            }
        }

        boolean pass(int x, int y, long t) {
            int i = y * width + x;
            if (learning) {
                if (!windowOpen) {
                    windowOpen = true;
                    windowStartUs = t;
                }
                if (t - windowStartUs >= learnUs) {
                    long total = 0;
                    for (long c : counts) {
                        total += c;
                    }
                    double mean = total / (double) pixels;
                    double threshold = Math.max(factor * mean, minRateHz * (learnUs / 1e6));
                    boolean[] next = new boolean[pixels];
                    for (int k = 0; k < pixels; k++) {
                        next[k] = counts[k] > threshold;
                    }
                    mask = next;
                    learning = false;
                } else {
                    counts[i]++;
                    if (mask[i]) {
                        droppedWhileLearning++;
                    }
                }
            }
            return !mask[i];
        }

        int masked() {
            int m = 0;
            for (boolean b : mask) {
                m += b ? 1 : 0;
            }
            return m;
        }
    }

    /** Runs both filters over the streams in turn, asking both to relearn before the batches {@code relearnAt} accepts. */
    static NaiveHotPixel checkAgainstNaive(long learnUs, double factor, double minRateHz, IntPredicate relearnAt,
            RandomEventStream... streams) {
        RandomEventStream first = streams[0];
        HotPixelFilter fast = new HotPixelFilter(first.width, first.height, learnUs, factor, minRateHz);
        NaiveHotPixel naive = new NaiveHotPixel(first.width, first.height, learnUs, factor, minRateHz);
        EventLog got = new EventLog();
        EventLog want = new EventLog();
        int batchNo = 0;
        int total = 0;
        int maxMasked = 0;
        for (RandomEventStream s : streams) {
            EventBatch batch = s.newBatch();
            total += s.size;
            for (int b = 0; b < s.batches; b++, batchNo++) {
                if (relearnAt.test(batchNo)) {
                    fast.requestRelearn();
                    naive.requestRelearn();
                    assertTrue(fast.learning(), "learning() right after requestRelearn()");
                }
                s.fill(b, batch);
                fast.process(batch);
                got.addAll(batch);
                naive.startBatch();
                for (int i = s.batchFrom(b); i < s.batchTo(b); i++) {
                    if (naive.pass(s.x[i], s.y[i], s.t[i])) {
                        want.add(s, i);
                    }
                }
                assertEquals(naive.masked(), fast.maskedPixels(), "masked pixels after batch " + batchNo);
                assertEquals(naive.learning || naive.relearnAtNextBatch, fast.learning(), "learning after batch " + batchNo);
                maxMasked = Math.max(maxMasked, naive.masked());
            }
        }
        for (int y = 0; y < first.height; y++) {
            for (int x = 0; x < first.width; x++) {
                assertEquals(naive.mask[y * first.width + x], fast.isMasked(x, y), "mask at (" + x + ", " + y + ")");
            }
        }
        EventLog.assertSameEvents(want, got, "hot-pixel");
        assertTrue(maxMasked > 0 && want.size() < total, "the stream must make the filter mask something");
        return naive;
    }

    @ParameterizedTest(name = "{0}x{1} seed {2} learn {3}us factor {4} min-rate {5}Hz")
    @CsvSource({
        // factor * mean dominates
        "32, 24, 1, 300000, 7.3, 20.5",
        // min-rate dominates
        "32, 24, 2, 300000, 2.1, 700.3",
        "40, 17, 3, 1000000, 13.7, 3.3",
        "17, 40, 4, 51000, 4.9, 0",
    })
    void shouldPassExactlyTheEventsTheNaiveFilterPasses(int w, int h, long seed, long learnUs, double factor, double minRateHz) {
        RandomEventStream s = RandomEventStream.builder(w, h, seed).hot(4, 300, 3000).disorder(0.02, 30).build();
        checkAgainstNaive(learnUs, factor, minRateHz, b -> false, s);
    }

    @Test
    void shouldLearnANewMaskOnRequestAndKeepTheOldOneWhileLearning() {
        // Two stretches with different hot pixels; relearn requested as the second one starts,
        // again in the middle of a window, and at a few other batches.
        RandomEventStream a = RandomEventStream.builder(32, 24, 21).hot(3, 500, 3000).build();
        RandomEventStream b = RandomEventStream.builder(32, 24, 22).startUs(a.t[a.size - 1] + 50_000)
                .hot(5, 500, 3000).build();
        int second = a.batches;
        NaiveHotPixel naive = checkAgainstNaive(200_000, 6.5, 30.5,
                n -> n == second || n == second + 3 || n == 17 || n == second + 40, a, b);
        assertTrue(naive.droppedWhileLearning > 0, "the old mask must have dropped events during a relearn");
    }

    @Test
    void shouldMaskTheHotPixelsOfTheLatestWindowOnly() {
        RandomEventStream a = RandomEventStream.builder(32, 24, 31).hot(3, 800, 3000).build();
        RandomEventStream b = RandomEventStream.builder(32, 24, 32).startUs(a.t[a.size - 1] + 50_000)
                .hot(3, 800, 3000).build();
        HotPixelFilter f = new HotPixelFilter(32, 24, 500_000, 10.5, 50.5);
        EventBatch batch = a.newBatch();
        for (int k = 0; k < a.batches; k++) {
            a.fill(k, batch);
            f.process(batch);
        }
        boolean[] before = maskOf(f, 32, 24);
        f.requestRelearn();
        EventBatch batch2 = b.newBatch();
        for (int k = 0; k < b.batches; k++) {
            b.fill(k, batch2);
            f.process(batch2);
        }
        boolean[] after = maskOf(f, 32, 24);
        assertFalse(f.learning());
        assertFalse(java.util.Arrays.equals(before, after), "a relearn over other hot pixels must change the mask");
    }

    @Test
    void shouldMaskOnlyPixelsWhoseCountExceedsTheThreshold() {
        // 4x4 sensor, 1 s window. Case 1: min-rate dominates, threshold max(2 * 11/16, 5 Hz * 1 s) = 5:
        // a pixel with 5 events stays, one with 6 is masked. Case 2: factor dominates, threshold
        // max(4 * 32/16, 0) = 8: a pixel with 8 events stays, one with 9 is masked.
        int[][][] cases = {
            {{0, 5}, {1, 6}},
            {{0, 8}, {1, 9}, {2, 2}, {3, 1}, {4, 1}, {5, 1}, {6, 1}, {7, 1}, {8, 1}, {9, 1}, {10, 1}, {11, 1}, {12, 1},
                {13, 1}, {14, 1}, {15, 1}},
        };
        double[][] settings = {{2, 5}, {4, 0}};
        for (int c = 0; c < cases.length; c++) {
            HotPixelFilter f = new HotPixelFilter(4, 4, 1_000_000, settings[c][0], settings[c][1]);
            NaiveHotPixel naive = new NaiveHotPixel(4, 4, 1_000_000, settings[c][0], settings[c][1]);
            EventBatch b = new EventBatch(64);
            b.reset(0);
            long t = 0;
            for (int[] pixelCount : cases[c]) {
                for (int k = 0; k < pixelCount[1]; k++) {
                    b.add(pixelCount[0] % 4, pixelCount[0] / 4, t, 1);
                    t += 1_000;
                }
            }
            b.add(0, 0, 1_000_000, 1); // ends the window, then is judged under the new mask
            b.add(1, 0, 1_000_001, 1);
            naive.startBatch();
            EventLog want = new EventLog();
            for (int i = 0; i < b.size; i++) {
                if (naive.pass(b.x[i], b.y[i], b.timeUs(i))) {
                    want.add(b.timeUs(i), b.x[i], b.y[i], b.p[i]);
                }
            }
            f.process(b);
            EventLog got = new EventLog();
            got.addAll(b);
            EventLog.assertSameEvents(want, got, "case " + c);
            assertFalse(f.isMasked(0, 0), "case " + c + ": count equal to the threshold is not hot");
            assertTrue(f.isMasked(1, 0), "case " + c + ": count above the threshold is hot");
            assertEquals(1, f.maskedPixels());
        }
    }

    private static boolean[] maskOf(HotPixelFilter f, int w, int h) {
        boolean[] m = new boolean[w * h];
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                m[y * w + x] = f.isMasked(x, y);
            }
        }
        return m;
    }
}
