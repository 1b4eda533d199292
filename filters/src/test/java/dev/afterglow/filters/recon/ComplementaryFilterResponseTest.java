package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Response of {@link ComplementaryFilter} checked against the continuous-time complementary filter
 * of C. Scheerlinck, N. Barnes and R. Mahony, "Continuous-time intensity estimation using event
 * cameras", ACCV 2018: between events {@code L(t) = exp(-a·(t - t_k))·(L(t_k) - L_F) + L_F}, so a
 * static scene relaxes to the frame with time constant 1/a, frames pass through a/(s+a), events
 * through s/(s+a), and the two transfer functions sum to one.
 */
class ComplementaryFilterResponseTest {
    private static final int WIDTH = 4;
    private static final int HEIGHT = 2;
    private static final int PIXELS = WIDTH * HEIGHT;
    private static final double CONTRAST = 0.1;
    private static final long FIRST_FRAME_US = 1_000_000;

    /** Frame log intensity after the offset is set up: nonzero, so decaying to 0 would be caught. */
    private static final float[] FRAME = {-0.7f, -0.2f, 0.3f, 0.9f, -1.4f, 0.05f, 1.2f, -0.45f};
    /** Earlier frame minus {@link #FRAME}: the offset the state starts from. */
    private static final float[] EARLIER_MINUS_FRAME = {0.5f, -0.8f, 1.3f, -0.25f, 0.4f, 0.6f, -0.35f, 0.9f};
    /** Events applied at the second frame's time: count and polarity per pixel. */
    private static final int[] EVENTS = {0, 3, -2, 0, 4, -1, 0, -5};

    /** Deviation L - L_F right after the second frame and its events, from the fixture. */
    private static double initialDeviation(int i) {
        return EARLIER_MINUS_FRAME[i] + EVENTS[i] * CONTRAST;
    }

    /**
     * Builds a filter whose state sits at an offset from the frame at time {@code frameUs}: an earlier
     * frame held long enough for the state to settle on it, then {@link #FRAME} with {@code classes},
     * then {@link #EVENTS} at the same time.
     */
    private static ComplementaryFilter offsetFilter(double cutoff, double lowCutoff, byte[] classes, long frameUs) {
        ComplementaryFilter filter = new ComplementaryFilter(WIDTH, HEIGHT, CONTRAST, cutoff, lowCutoff, 0.95, 0.05);
        float[] earlier = new float[PIXELS];
        for (int i = 0; i < PIXELS; i++) {
            earlier[i] = FRAME[i] + EARLIER_MINUS_FRAME[i];
        }
        filter.applyLogFrame(FIRST_FRAME_US, earlier, new byte[PIXELS]);
        filter.applyLogFrame(frameUs, FRAME, classes);
        EventBatch batch = new EventBatch(64);
        batch.reset(frameUs);
        for (int i = 0; i < PIXELS; i++) {
            for (int k = 0; k < Math.abs(EVENTS[i]); k++) {
                batch.add(i % WIDTH, i / WIDTH, frameUs, EVENTS[i]);
            }
        }
        filter.process(batch);
        return filter;
    }

    /** (L - L_F) / (L(t0) - L_F) at pixel i and time t. */
    private static double deviationRatio(ComplementaryFilter filter, long timeUs, int i) {
        float[] out = new float[PIXELS];
        filter.readLog(timeUs, out);
        return (out[i] - FRAME[i]) / initialDeviation(i);
    }

    @ParameterizedTest(name = "a={0}rad/s")
    @ValueSource(doubles = {40, 4}) // 1/a = 25 000 us and 250 000 us: whole microseconds
    void shouldRelaxToFrameWithTimeConstantOneOverCutoff(double cutoff) {
        long tauUs = Math.round(1e6 / cutoff);
        // Earlier frame held for 40/a: its own relaxation leaves e^-40 of the start, negligible.
        long frameUs = FIRST_FRAME_US + 40 * tauUs;
        ComplementaryFilter filter = offsetFilter(cutoff, cutoff / 10, new byte[PIXELS], frameUs);

        float[] out = new float[PIXELS];
        filter.readLog(frameUs, out);
        for (int i = 0; i < PIXELS; i++) {
            assertTrue(Math.abs(initialDeviation(i)) > 0.1, "fixture: offset at pixel " + i);
            // Setting up the offset: the state kept the earlier frame's level, events added p·C each.
            assertEquals(initialDeviation(i), out[i] - FRAME[i], 1e-5, "initial deviation at pixel " + i);
        }
        for (int i = 0; i < PIXELS; i++) {
            // First-order relaxation with time constant 1/a (Scheerlinck, Barnes & Mahony, ACCV 2018,
            // eq. for L(t) between events): e^-1 of the deviation left after 1/a, e^-3 after 3/a.
            assertEquals(Math.exp(-1), deviationRatio(filter, frameUs + tauUs, i), 1e-3 * Math.exp(-1),
                    "after 1/a at pixel " + i);
            assertEquals(Math.exp(-3), deviationRatio(filter, frameUs + 3 * tauUs, i), 1e-3 * Math.exp(-3),
                    "after 3/a at pixel " + i);
        }
    }

    @Test
    void shouldRelaxSaturatedOrDarkPixelsWithLowerCutoff() {
        double cutoff = 40; // 1/a = 25 000 us
        double lowCutoff = 4; // 1/a_low = 250 000 us
        long tauUs = 25_000;
        long tauLowUs = 250_000;
        byte[] classes = {1, 0, 0, 1, 1, 0, 1, 0};
        // Earlier frame (class 0) held for 40/a before the second frame.
        long frameUs = FIRST_FRAME_US + 40 * tauUs;
        ComplementaryFilter filter = offsetFilter(cutoff, lowCutoff, classes, frameUs);
        for (int i = 0; i < PIXELS; i++) {
            // The paper lowers the cut-off where the frame is saturated or dark (Scheerlinck, Barnes &
            // Mahony, ACCV 2018); each class relaxes as a first-order system with its own 1/cut-off.
            double pixelCutoff = classes[i] == 1 ? lowCutoff : cutoff;
            long pixelTauUs = classes[i] == 1 ? tauLowUs : tauUs;
            assertEquals(Math.exp(-1), deviationRatio(filter, frameUs + pixelTauUs, i), 1e-3 * Math.exp(-1),
                    "after 1/cut-off at pixel " + i + " (class " + classes[i] + ")");
            double expectedAtTau = Math.exp(-pixelCutoff * tauUs * 1e-6);
            assertEquals(expectedAtTau, deviationRatio(filter, frameUs + tauUs, i), 1e-3 * expectedAtTau,
                    "after 1/a at pixel " + i + " (class " + classes[i] + ")");
        }
    }

    @ParameterizedTest(name = "a={0}rad/s")
    @ValueSource(doubles = {20, 200})
    void shouldLowPassStepSeenOnlyInFrames(double cutoff) {
        ComplementaryFilter filter = new ComplementaryFilter(1, 1, CONTRAST, cutoff, cutoff / 10, 0.95, 0.05);
        long frameIntervalUs = 1_000; // 1 kHz frames
        long stepUs = 200_000; // a frame time
        long endUs = stepUs + Math.round(6e6 / cutoff);
        float[] level = new float[1];
        byte[] cls = new byte[1];
        float[] out = new float[1];
        for (long t = 0; t <= endUs; t += frameIntervalUs) {
            level[0] = t >= stepUs ? 1f : 0f;
            filter.applyLogFrame(t, level, cls);
            // Read at the frame and half-way to the next one.
            for (long r = t; r < t + frameIntervalUs; r += frameIntervalUs / 2) {
                filter.readLog(r, out);
                // Step response of the low-pass a/(s+a): 1 - exp(-a·tau) (any signals and systems
                // handbook, e.g. Oppenheim & Willsky). The step falls on a frame time, so frames held
                // constant between updates give exactly this value.
                double expected = r < stepUs ? 0 : 1 - Math.exp(-cutoff * (r - stepUs) * 1e-6);
                assertEquals(expected, out[0], 1e-5, "output at t=" + r + "us");
            }
        }
    }

    @ParameterizedTest(name = "w={0}·a")
    @CsvSource({"0.1", "1", "10"})
    void shouldTrackInputWhenFramesAndEventsSeeSameSignal(double ratio) {
        double cutoff = 20;
        double amplitude = 2.0;
        double contrast = 0.02;
        double w = ratio * cutoff;
        ComplementaryFilter filter = new ComplementaryFilter(1, 1, contrast, cutoff, cutoff / 10, 0.95, 0.05);
        float[] frame = new float[1];
        byte[] cls = new byte[1];
        double period = 2 * Math.PI / w;
        double settle = Math.max(8 / cutoff, 3 * period);
        double end = settle + 10 * period;
        SinusoidFit fit = SinusoidDrive.run(filter, amplitude, contrast, w, (long) (settle * 1e6), (long) (end * 1e6),
                1_000, (t, v) -> {
                    frame[0] = v;
                    filter.applyLogFrame(t, frame, cls);
                });
        // Frames pass through a/(s+a), events through s/(s+a); a/(s+a) + s/(s+a) = 1, so the fused
        // output has unit gain and zero phase at every w (Scheerlinck, Barnes & Mahony, ACCV 2018).
        double gainDb = 20 * Math.log10(fit.amplitude() / amplitude);
        assertEquals(0.0, gainDb, 1.0, "fused gain at w=" + w + "rad/s");
        assertEquals(0.0, Math.toDegrees(fit.phaseRad()), 3.0, "fused phase at w=" + w + "rad/s");
    }
}
