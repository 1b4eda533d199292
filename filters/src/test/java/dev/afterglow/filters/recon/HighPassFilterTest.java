package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.RandomEventStream;
import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link HighPassFilter} against a naive double-precision reference of the published filter
 * (C. Scheerlinck, N. Barnes and R. Mahony, "Continuous-time intensity estimation using event
 * cameras", ACCV 2018): per pixel {@code L <- exp(-a (t - t_last)) L + p C}, read out as
 * {@code L exp(-a (T - t_last))}, with one {@code Math.exp} per event and per pixel per readout.
 * Readouts must agree within 1e-4 C plus one float ulp of the value (the readout is a float array,
 * so its last rounding is allowed on top).
 */
class HighPassFilterTest {

    /** Naive high-pass filter: double state and long times per pixel. */
    static final class NaiveHighPass {
        private final int width;
        private final double contrast;
        private final double alphaPerUs;
        private final double[] level;
        private final long[] lastUs;

        NaiveHighPass(int width, int height, double contrast, double cutoffRadPerS) {
            this.width = width;
            this.contrast = contrast;
            this.alphaPerUs = cutoffRadPerS / 1e6;
            this.level = new double[width * height];
            this.lastUs = new long[width * height];
        }

        void event(int x, int y, long t, int p) {
            int i = y * width + x;
            level[i] = Math.exp(-alphaPerUs * (t - lastUs[i])) * level[i] + p * contrast;
            lastUs[i] = t;
        }

        double read(int i, long timeUs) {
            return level[i] * Math.exp(-alphaPerUs * (timeUs - lastUs[i]));
        }
    }

    /**
     * Feeds an ordered stream to both, reading out at random times between batches, and returns
     * the largest |L| seen in C units (so callers can check the data was not trivial).
     */
    static double checkAgainstNaive(RandomEventStream s, double contrast, double cutoff, long seed) {
        HighPassFilter fast = new HighPassFilter(s.width, s.height, contrast, cutoff);
        NaiveHighPass naive = new NaiveHighPass(s.width, s.height, contrast, cutoff);
        SplittableRandom rnd = new SplittableRandom(seed);
        float[] out = new float[s.width * s.height];
        EventBatch batch = s.newBatch();
        long latest = Long.MIN_VALUE;
        long clock = Long.MIN_VALUE; // readouts never go back in time
        int readouts = 0;
        double largest = 0;
        double tolerance = 1e-4 * contrast;
        for (int b = 0; b < s.batches; b++) {
            s.fill(b, batch);
            fast.process(batch);
            for (int i = s.batchFrom(b); i < s.batchTo(b); i++) {
                naive.event(s.x[i], s.y[i], s.t[i], s.p[i]);
                latest = Math.max(latest, s.t[i]);
            }
            if (latest == Long.MIN_VALUE || (rnd.nextInt(4) == 0 && b != s.batches - 1)) {
                continue;
            }
            long next = s.batchTo(b) < s.size ? s.t[s.batchTo(b)] : latest + 10_000_000;
            long readAt = Math.max(latest, clock);
            next = Math.max(next, readAt);
            for (int r = rnd.nextInt(3); r >= 0; r--) {
                readAt += rnd.nextLong(Math.max(1, (next - readAt) / 2 + 1));
                fast.readLog(readAt, out);
                clock = readAt;
                readouts++;
                for (int i = 0; i < out.length; i++) {
                    double want = naive.read(i, readAt);
                    largest = Math.max(largest, Math.abs(want) / contrast);
                    if (!(Math.abs(out[i] - want) <= tolerance + Math.ulp((float) want))) {
                        fail("cutoff " + cutoff + "rad/s: pixel (" + (i % s.width) + ", " + (i / s.width) + ") at " + readAt
                                + "us: got " + out[i] + ", naive " + want + ", |diff|/C = " + Math.abs(out[i] - want) / contrast);
                    }
                }
            }
        }
        assertEquals(0, fast.lateEvents(), "an ordered stream has no late events");
        assertEquals(s.size, fast.counters().eventsOut(), "every event applied");
        assertTrue(readouts > 20, "readouts: " + readouts);
        return largest;
    }

    @ParameterizedTest(name = "{0}x{1} seed {2} cutoff {3}rad/s C {4}")
    @CsvSource({
        "32, 24, 1, 0.001, 0.2",
        "32, 24, 2, 0.05, 0.2",
        "32, 24, 3, 5, 0.15",
        "32, 24, 4, 24, 0.2",
        "32, 24, 5, 500, 0.3",
        "32, 24, 6, 10000, 0.2",
        "40, 17, 7, 0.05, 0.5",
        "40, 17, 8, 5, 0.1",
        "17, 40, 9, 500, 0.25",
        "17, 40, 10, 3000, 2",
    })
    void shouldReadOutWhatTheNaiveFilterComputes(int w, int h, long seed, double cutoff, double contrast) {
        RandomEventStream s = RandomEventStream.builder(w, h, seed).build();
        double largest = checkAgainstNaive(s, contrast, cutoff, seed);
        assertTrue(largest >= 1, "the stream must leave some pixel at least C away from zero, got " + largest + " C");
    }
}
