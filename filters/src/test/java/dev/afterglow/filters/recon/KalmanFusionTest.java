package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.RandomEventStream;
import dev.afterglow.filters.chain.Chain;
import java.nio.ByteBuffer;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class KalmanFusionTest {
    private static final double C = 0.2;

    private static KalmanFusion filter(int w, int h, double q, double eventNoise, double shot, double read) {
        return new KalmanFusion(w, h, C, q, eventNoise, new FrameNoiseModel(shot, read, 0.98), false, "kalman-fusion");
    }

    private static ByteBuffer frame(int n, int value) {
        byte[] b = new byte[n];
        java.util.Arrays.fill(b, (byte) value);
        return ByteBuffer.wrap(b);
    }

    @Test
    void shouldConvergeToTheSteadyStateGainOfTheScalarModel() {
        // Scalar random walk x' = x + w (Var w = qT per frame period T), measured by z = x + v (Var v = R):
        // the predicted variance converges to the positive root of P^2 - qT*P - qT*R = 0 and the gain to
        // K = P/(P + R) (discrete algebraic Riccati equation, any estimation textbook, e.g. Simon,
        // "Optimal State Estimation", 2006, ch. 7).
        double q = 0.3;
        long periodUs = 50_000;
        int value = 60;
        FrameNoiseModel model = new FrameNoiseModel(0.5, 2, 0.98);
        // Measurements are weighed by the noise at the level the estimate predicts; it settles on the frame's.
        double r = model.varianceAtLog(model.log(value, 8), 8);
        KalmanFusion f = filter(1, 1, q, 0.3, 0.5, 2);
        for (int k = 0; k < 400; k++) {
            f.applyFrame(k * periodUs, frame(1, value), 8);
        }
        double qt = q * periodUs * 1e-6;
        double predicted = (qt + Math.sqrt(qt * qt + 4 * qt * r)) / 2;
        double gain = predicted / (predicted + r);
        assertEquals((1 - gain) * predicted, f.variance(0), 1e-12 * predicted, "updated variance (1 - K) P");
        assertTrue(gain > 0.05 && gain < 0.95, "a case where frames and drift both matter: K = " + gain);
    }

    @Test
    void shouldCorrectAgainstTheEstimatesOwnExposureAverageWhenTheExposureWasTracked() {
        // A frame measures the pixel's average over its exposure. With the estimate off the truth by
        // a constant d (events exact), the average of the estimate over the exposure is off by d too,
        // so the innovation is z - avg(x) = -d whatever events fell in the exposure, and the update
        // leaves (1 - K)·d (Kalman update equations, common practice). Taken against the current
        // estimate instead, the events after the exposure's average would count as error.
        KalmanFusion f = filter(1, 1, 0.3, 0.3, 0, 0);
        long period = 50_000;
        long exposure = 10_000;
        EventBatch batch = new EventBatch(16);
        int[] frameValues = {40, 40};
        // Two frames teach the cadence; the third exposure [100000, 110000) is tracked.
        for (int k = 0; k < 2; k++) {
            f.applyFrame(k * period, k * period + exposure, frame(1, frameValues[k]), 8);
        }
        double before = f.estimate(0);
        // Three ON events inside the third exposure, at 102000, 105000 and 108000 us.
        batch.reset(100_000);
        for (int t : new int[] {2_000, 5_000, 8_000}) {
            batch.add(0, 0, 100_000 + t, 1);
        }
        f.process(batch);
        double now = f.estimate(0);
        assertEquals(before + 3 * C, now, 1e-12);
        double average = before + C * (8_000 + 5_000 + 2_000) / 10_000.0; // time-weighted share of each step
        double priorVariance = f.variance(0) + 0.3 * (110_000 - 108_000) * 1e-6;
        int z = 90;
        double r = new FrameNoiseModel(0, 0, 0.98).varianceAtLog(average, 8);
        double gain = priorVariance / (priorVariance + r);
        double zLog = Math.log((z + 0.5) / 256);
        f.applyFrame(100_000, 110_000, frame(1, z), 8);
        assertEquals(1, f.framesAligned(), "the third frame's exposure was the predicted one, the first two taught it");
        assertEquals(now + gain * (zLog - average), f.estimate(0), 1e-6);
    }

    @Test
    void shouldTakeFramesWithImpossibleExposuresAgainstTheCurrentEstimateWithoutTrackingThem() {
        // Exposure times come from the wire: zero-length, reversed, jumping back or far ahead, and
        // a gap past the longest tracked period. None may throw, divide by zero or be tracked.
        KalmanFusion f = filter(1, 1, 0.3, 1, 0, 2);
        EventBatch batch = new EventBatch(4);
        long[][] windows = {{0, 10_000}, {50_000, 50_000}, {100_000, 90_000}, {20_000, 30_000},
            {1L << 51, (1L << 51) + 10_000}, {(1L << 51) + 50_000, (1L << 51) + 50_000}};
        for (long[] w : windows) {
            f.applyFrame(w[0], w[1], frame(1, 90), 8);
            batch.reset(Math.max(0, w[1]));
            batch.add(0, 0, Math.max(0, w[1]) + 1, 1);
            f.process(batch);
            assertTrue(Double.isFinite(f.estimate(0)) && Double.isFinite(f.variance(0)), "window " + w[0] + ".." + w[1]);
        }
        assertEquals(0, f.framesAligned(), "no impossible cadence is tracked");
    }

    @Test
    void shouldHoldTheFrameExactlyInThePureFrameLimit() {
        // Pure-frame limit: as R -> 0 against an unknown prior, K -> 1 and the update returns the
        // measurement (Kalman update equations, common practice). Here R is quantisation only.
        int w = 16;
        int h = 8;
        KalmanFusion f = filter(w, h, 1, 0.3, 0, 0);
        byte[] pixels = new byte[w * h];
        for (int i = 0; i < pixels.length; i++) {
            pixels[i] = (byte) (i * 2 % 250);
        }
        assertHoldsTheFrame(f, pixels, 1e-5);
    }

    @Test
    void shouldHoldATexturedFrameInThePureFrameLimitWithFrameSmoothingOn() {
        // With noiseless frames (quantisation only) the local-statistics filter sees texture far
        // above the noise (k -> 1) and keeps each pixel: the estimate is still the frame.
        int w = 16;
        int h = 8;
        KalmanFusion f = new KalmanFusion(w, h, C, 1, 0.3, new FrameNoiseModel(0, 0, 0.98), false, 1, "kalman-fusion");
        byte[] pixels = new byte[w * h];
        for (int i = 0; i < pixels.length; i++) {
            pixels[i] = (byte) (20 + (i * 37) % 200);
        }
        assertHoldsTheFrame(f, pixels, 2e-3);
    }

    /** Applies one 8-bit frame and checks that every pixel reads back as its log intensity ln((v + ½)/256). */
    private static void assertHoldsTheFrame(KalmanFusion f, byte[] pixels, double tolerance) {
        f.applyFrame(1_000, ByteBuffer.wrap(pixels), 8);
        float[] out = new float[pixels.length];
        f.readLog(1_000, out);
        for (int i = 0; i < out.length; i++) {
            double z = Math.log(((pixels[i] & 0xFF) + 0.5) / 256);
            assertEquals(z, out[i], tolerance, "pixel " + i);
        }
    }

    @Test
    void shouldEstimateAStaticDarkSceneBetterWithFrameSmoothing() {
        // A static scene of two flat halves at 3 and 6 counts, frames with read noise 1.5 counts
        // (the dark scenes' sensor): after 10 frames the smoothed filter's log error is well
        // below the unsmoothed one's on the flat parts, and the step between the halves stays.
        int w = 32;
        int h = 32;
        FrameNoiseModel model = new FrameNoiseModel(0.5, 1.5, 0.98);
        KalmanFusion plain = new KalmanFusion(w, h, C, 0.02, 0.6, model, false, 0, "kalman-fusion");
        KalmanFusion smooth = new KalmanFusion(w, h, C, 0.02, 0.6, model, false, 1, "kalman-fusion");
        SplittableRandom random = new SplittableRandom(3);
        for (int k = 0; k < 10; k++) {
            byte[] pixels = new byte[w * h];
            for (int i = 0; i < pixels.length; i++) {
                int truth = i % w < w / 2 ? 3 : 6;
                pixels[i] = (byte) Math.max(0, Math.round(truth + 1.5 * random.nextGaussian()));
            }
            plain.applyFrame(k * 50_000L, ByteBuffer.wrap(pixels.clone()), 8);
            smooth.applyFrame(k * 50_000L, ByteBuffer.wrap(pixels), 8);
        }
        double plainError = 0;
        double smoothError = 0;
        double left = 0;
        double right = 0;
        double plainLeft = 0;
        double plainRight = 0;
        int flat = 0;
        for (int y = 2; y < h - 2; y++) {
            for (int x = 2; x < w - 2; x++) {
                if (Math.abs(x - w / 2) < 3) {
                    continue;
                }
                int i = y * w + x;
                double truth = Math.log(((x < w / 2 ? 3 : 6) + 0.5) / 256);
                plainError += Math.pow(plain.estimate(i) - truth, 2);
                smoothError += Math.pow(smooth.estimate(i) - truth, 2);
                if (x < w / 2) {
                    left += smooth.estimate(i);
                    plainLeft += plain.estimate(i);
                } else {
                    right += smooth.estimate(i);
                    plainRight += plain.estimate(i);
                }
                flat++;
            }
        }
        assertTrue(smoothError < plainError / 2, "mean square log error " + smoothError / flat + " smoothed, "
                + plainError / flat + " not");
        // The log of a noisy dark count is biased (Jensen's inequality; clipping at 0 adds to it), more
        // so the darker the pixel: less noise in the smoothed measurement means less bias in the step.
        double step = (right - left) / (flat / 2.0);
        double plainStep = (plainRight - plainLeft) / (flat / 2.0);
        double want = Math.log(6.5 / 3.5);
        assertTrue(step > 0 && Math.abs(step - want) < Math.abs(plainStep - want), "step between the halves "
                + step + " smoothed, " + plainStep + " not, true " + want);
    }

    @Test
    void shouldBeDirectIntegrationWithoutFrames() {
        // Pure-event limit: with no measurement the state only integrates its inputs, x = sum of p*C
        // (the event generation model's direct integration, common practice).
        int w = 32;
        int h = 24;
        RandomEventStream s = RandomEventStream.builder(w, h, 11).build();
        KalmanFusion f = filter(w, h, 0.05, 0.3, 0.5, 2);
        DirectIntegration direct = new DirectIntegration(w, h, C);
        EventBatch a = s.newBatch();
        EventBatch b = s.newBatch();
        float[] fo = new float[w * h];
        float[] dox = new float[w * h];
        for (int k = 0; k < s.batches; k++) {
            s.fill(k, a);
            s.fill(k, b);
            f.process(a);
            direct.process(b);
        }
        f.readLog(s.batchBase(s.batches - 1) + 1, fo);
        direct.readLog(s.batchBase(s.batches - 1) + 1, dox);
        for (int i = 0; i < fo.length; i++) {
            assertEquals(dox[i], fo[i], 1e-4, "pixel " + i);
        }
    }

    @Test
    void shouldWeighASaturatedPixelAsNoMeasurementAndADarkOneLessThanABrightOne() {
        KalmanFusion f = filter(3, 1, 0.05, 0.3, 0.5, 2);
        EventBatch events = new EventBatch(3);
        events.reset(0);
        for (int x = 0; x < 3; x++) {
            events.add(x, 0, 10, 1); // every pixel: +C from its first event, before any frame
        }
        f.process(events);
        byte[] px = {(byte) 255, (byte) 2, (byte) 128}; // saturated, dark, well exposed
        f.applyFrame(20, ByteBuffer.wrap(px), 8);
        assertEquals(C, f.estimate(0), 1e-4, "a saturated frame pixel leaves the event estimate alone");
        double zDark = Math.log(2.5 / 256);
        double zMid = Math.log(128.5 / 256);
        double pulledDark = (f.estimate(1) - C) / (zDark - C);
        double pulledMid = (f.estimate(2) - C) / (zMid - C);
        assertTrue(pulledMid > pulledDark, "the bright pixel's frame weighs more: " + pulledMid + " vs " + pulledDark);
        assertTrue(pulledMid > 0.99, "an unknown pixel takes a good frame almost whole: " + pulledMid);
    }

    @Test
    void shouldMatchANaiveDoublePrecisionReferenceOnSeededStreams() {
        // The reference keeps every event and computes each tracked frame's exposure average from
        // them directly: x(start) = x(now) minus the steps since the start, plus each step in the
        // exposure weighted by the share of the exposure after it.
        int w = 24;
        int h = 16;
        double q = 0.2;
        double eventNoise = 0.4;
        FrameNoiseModel model = new FrameNoiseModel(0.7, 3, 0.95);
        KalmanFusion fast = new KalmanFusion(w, h, C, q, eventNoise, model, false, "kalman-fusion");
        // Short batches without gaps: a frame arrives before the stream reaches the next exposure.
        RandomEventStream s = RandomEventStream.builder(w, h, 5).gaps(0, 0, 0).batches(200, 5_000).build();
        int n = w * h;
        double[] x = new double[n];
        double[] p = new double[n];
        long[] last = new long[n];
        java.util.Arrays.fill(p, KalmanFusion.UNKNOWN_VARIANCE);
        java.util.Arrays.fill(last, Long.MIN_VALUE);
        java.util.List<long[]> applied = new java.util.ArrayList<>(); // {pixel, time, polarity}
        SplittableRandom rnd = new SplittableRandom(5);
        EventBatch batch = s.newBatch();
        float[] out = new float[n];
        double re = Math.pow(eventNoise * C, 2);
        long first = s.t[0];
        long period = Math.max(1_000, (s.t[s.size - 1] - first) / 12);
        long exposure = period / 5;
        int nextFrame = 0;
        int saturatedAt = (int) Math.ceil(0.95 * 255);
        for (int k = 0; k < s.batches; k++) {
            long batchStart = s.batchTo(k) > s.batchFrom(k) ? s.t[s.batchFrom(k)] : Long.MAX_VALUE;
            // Frames whose exposure ended before this batch, applied as a node applies them on arrival.
            while (first + nextFrame * period + exposure < batchStart && nextFrame < 12) {
                long fs = first + nextFrame * period;
                long fe = fs + exposure;
                byte[] px = new byte[n];
                for (int i = 0; i < n; i++) {
                    px[i] = (byte) rnd.nextInt(256);
                }
                fast.applyFrame(fs, fe, ByteBuffer.wrap(px), 8);
                boolean tracked = nextFrame >= 2; // two frames teach the cadence
                double[] seen = new double[n];
                for (int i = 0; i < n; i++) {
                    seen[i] = x[i];
                }
                if (tracked) {
                    for (long[] e : applied) {
                        int idx = (int) e[0];
                        if (e[1] >= fs) {
                            seen[idx] -= e[2] * C;
                            if (e[1] <= fe) {
                                seen[idx] += e[2] * C * (fe - e[1]) / (double) exposure;
                            }
                        }
                    }
                }
                double floor = Math.log((saturatedAt - 1 + 0.5) / 256);
                double floorR = (0.7 * (saturatedAt - 1) + 9 + 1.0 / 12) / Math.pow(saturatedAt - 1 + 0.5, 2);
                for (int i = 0; i < n; i++) {
                    int v = px[i] & 0xFF;
                    if (last[i] != Long.MIN_VALUE && fe > last[i]) {
                        p[i] += q * (fe - last[i]) * 1e-6;
                    }
                    double z = Math.log((v + 0.5) / 256);
                    double r = p[i] >= KalmanFusion.UNKNOWN_VARIANCE ? (0.7 * v + 9 + 1.0 / 12) / ((v + 0.5) * (v + 0.5))
                            : model.varianceAtLog(seen[i], 8); // the noise at the level the estimate predicts
                    boolean skip = false;
                    if (v >= saturatedAt) { // censored: at least saturation
                        skip = seen[i] >= floor;
                        z = floor;
                        r = floorR;
                    }
                    if (!skip) {
                        double gain = p[i] / (p[i] + r);
                        x[i] += gain * (z - seen[i]);
                        p[i] *= 1 - gain;
                    }
                    if (last[i] == Long.MIN_VALUE || fe > last[i]) {
                        last[i] = fe;
                    }
                }
                nextFrame++;
            }
            s.fill(k, batch);
            fast.process(batch);
            for (int i = s.batchFrom(k); i < s.batchTo(k); i++) {
                int idx = s.y[i] * w + s.x[i];
                long t = Math.max(s.t[i], last[idx]);
                p[idx] += (last[idx] == Long.MIN_VALUE ? 0 : q * (t - last[idx]) * 1e-6) + re;
                x[idx] += s.p[i] * C;
                last[idx] = t;
                applied.add(new long[] {idx, s.t[i], s.p[i]});
            }
            fast.readLog(0, out);
            for (int i = 0; i < n; i++) {
                // The exposure's start and its events' shares are kept in float: 1e-5 log units.
                if (!(Math.abs(out[i] - x[i]) <= 1e-5)) {
                    fail("batch " + k + " pixel " + i + ": got " + out[i] + ", naive " + x[i]);
                }
                if (Math.abs(fast.variance(i) - p[i]) > 1e-9 * Math.max(1, p[i])) {
                    fail("batch " + k + " pixel " + i + ": variance " + fast.variance(i) + ", naive " + p[i]);
                }
            }
        }
        assertTrue(fast.framesApplied() >= 8, "frames " + fast.framesApplied());
        assertEquals(fast.framesApplied() - 2, fast.framesAligned(), "every frame after the first two was tracked");
    }

    @Test
    void shouldBuildFromAChainDescription() {
        Chain chain = Chain.build("refractory(period=100us) | kalman-fusion(process-noise=0.1, read-noise=3)", 8, 8);
        assertTrue(chain.reconstruction() instanceof KalmanFusion);
        assertTrue(chain.reconstruction().describe().startsWith("kalman-fusion("), chain.reconstruction().describe());
    }
}
