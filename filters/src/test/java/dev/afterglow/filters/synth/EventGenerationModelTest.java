package dev.afterglow.filters.synth;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * {@link EventGenerationModel} against the event generation model: a pixel fires each time its log
 * intensity has moved by the contrast threshold C from the level of its last event. A linear log
 * ramp of size D from level L0 over [t0, t1] therefore gives floor(|D|/C) events of the ramp's sign,
 * the k-th when the ramp crosses L0 ± k·C, at t0 + k·C/|slope|.
 */
class EventGenerationModelTest {
    private static final int WIDTH = 3;
    private static final int HEIGHT = 2;
    private static final int PIXELS = WIDTH * HEIGHT;
    private static final long T0_US = 2_000_000;
    private static final long T1_US = 3_000_000;

    /** Ramp sizes per pixel: both signs, none a multiple of the thresholds used, one below C. */
    private static final double[] RAMP = {0.73, -1.07, 2.31, -0.47, 0.13, -3.99};
    /** Start levels per pixel. */
    private static final double[] START = {0.0, -1.3, 0.42, 2.0, -0.8, 1.1};

    /** Runs the ramps from {@code T0_US} to {@code T1_US}, split at the given interior step ends. */
    private static EventBatch ramp(EventGenerationModel model, long[] stepEndsUs) {
        EventBatch batch = new EventBatch(4096);
        batch.reset(T0_US);
        model.start(T0_US, START);
        double[] next = new double[PIXELS];
        for (long end : stepEndsUs) {
            double f = (double) (end - T0_US) / (T1_US - T0_US);
            for (int i = 0; i < PIXELS; i++) {
                next[i] = START[i] + f * RAMP[i];
            }
            model.advance(end, next, batch);
        }
        return batch;
    }

    private static long[] evenSteps(int steps) {
        long[] ends = new long[steps];
        for (int k = 1; k <= steps; k++) {
            ends[k - 1] = T0_US + (T1_US - T0_US) * k / steps;
        }
        return ends;
    }

    private static long[] irregularSteps(int steps, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        long[] ends = new long[steps];
        for (int k = 0; k < steps - 1; k++) {
            ends[k] = T0_US + 1 + rng.nextLong(T1_US - T0_US - 1);
        }
        ends[steps - 1] = T1_US;
        java.util.Arrays.sort(ends);
        return ends;
    }

    /** Checks counts, signs, order and crossing times of every pixel against the model. */
    private static void assertRampEvents(EventBatch batch, double[] thresholdOn, double[] thresholdOff) {
        List<List<Long>> times = new ArrayList<>();
        for (int i = 0; i < PIXELS; i++) {
            times.add(new ArrayList<>());
        }
        for (int e = 0; e < batch.size; e++) {
            if (e > 0) {
                assertTrue(batch.timeUs(e) >= batch.timeUs(e - 1), "timestamps non-decreasing at event " + e);
            }
            int pixel = batch.y[e] * WIDTH + batch.x[e];
            assertTrue(batch.x[e] < WIDTH && batch.y[e] < HEIGHT, "event inside sensor");
            assertEquals(Math.signum(RAMP[pixel]), batch.p[e], "polarity of the ramp's sign at pixel " + pixel);
            times.get(pixel).add(batch.timeUs(e));
        }
        for (int i = 0; i < PIXELS; i++) {
            double c = RAMP[i] > 0 ? thresholdOn[i] : thresholdOff[i];
            // Event generation model: floor(|D|/C) events for a ramp of size D.
            double ratio = Math.abs(RAMP[i]) / c;
            int expected = (int) Math.floor(ratio);
            assertTrue(ratio - expected > 0.02 && ratio - expected < 0.98,
                    "fixture: D=" + RAMP[i] + " near a multiple of C=" + c);
            assertEquals(expected, times.get(i).size(), "events at pixel " + i + " for D=" + RAMP[i] + ", C=" + c);
            double slopePerUs = Math.abs(RAMP[i]) / (T1_US - T0_US);
            for (int k = 1; k <= expected; k++) {
                // The k-th crossing of L0 ± k·C on a linear ramp is at t0 + k·C/|slope|.
                double crossing = T0_US + k * c / slopePerUs;
                assertEquals(crossing, times.get(i).get(k - 1), 1.0, "time of event " + k + " at pixel " + i);
            }
        }
    }

    private static double[] filled(double v) {
        double[] a = new double[PIXELS];
        java.util.Arrays.fill(a, v);
        return a;
    }

    @ParameterizedTest(name = "C={0}")
    @ValueSource(doubles = {0.2, 0.15, 0.3})
    void shouldFireFloorOfRampOverContrastInOneStep(double contrast) {
        EventBatch batch = ramp(new EventGenerationModel(WIDTH, HEIGHT, contrast), new long[] {T1_US});
        assertRampEvents(batch, filled(contrast), filled(contrast));
    }

    @ParameterizedTest(name = "C={0}")
    @ValueSource(doubles = {0.2, 0.15, 0.3})
    void shouldFireSameEventsWhenRampIsSplitIntoSteps(double contrast) {
        EventBatch even = ramp(new EventGenerationModel(WIDTH, HEIGHT, contrast), evenSteps(50));
        assertRampEvents(even, filled(contrast), filled(contrast));
        EventBatch irregular = ramp(new EventGenerationModel(WIDTH, HEIGHT, contrast), irregularSteps(37, 0xC0FFEEL));
        assertRampEvents(irregular, filled(contrast), filled(contrast));
    }

    @Test
    void shouldUsePerPixelThresholdsOfTheRampsSign() {
        // Mismatch: each pixel its own ON and OFF threshold; ON differs from OFF so a swap is caught.
        double[] on = {0.11, 0.17, 0.23, 0.29, 0.05, 0.37};
        double[] off = {0.31, 0.22, 0.19, 0.13, 0.41, 0.09};
        EventBatch oneStep = ramp(new EventGenerationModel(WIDTH, HEIGHT, on, off), new long[] {T1_US});
        assertRampEvents(oneStep, on, off);
        EventBatch steps = ramp(new EventGenerationModel(WIDTH, HEIGHT, on, off), irregularSteps(23, 0xBEEFL));
        assertRampEvents(steps, on, off);
    }
}
