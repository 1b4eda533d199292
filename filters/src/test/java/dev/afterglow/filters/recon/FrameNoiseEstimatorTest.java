package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;

import dev.afterglow.filters.EventBatch;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class FrameNoiseEstimatorTest {
    private static final int W = 128;
    private static final int H = 96;

    /**
     * Frames of a static scene (levels spread over 8 .. 230 counts) with Gaussian noise of variance
     * r² + g·level, rounded to counts: what the EMVA 1288 linear camera model says a camera gives
     * (quantisation adds the 1/12 count² the model carries).
     */
    private static byte[] noisyFrame(double read, double gain, SplittableRandom random) {
        byte[] px = new byte[W * H];
        for (int i = 0; i < px.length; i++) {
            double level = 8 + 222.0 * (i % W) / W;
            double v = level + random.nextGaussian() * Math.sqrt(read * read + gain * level);
            px[i] = (byte) Math.max(0, Math.min(255, Math.round(v)));
        }
        return px;
    }

    @Test
    void shouldRecoverReadNoiseAndShotGainFromPairsOfFramesOfAStaticScene() {
        // The photon-transfer line of the EMVA 1288 standard (from memory): half the mean square
        // difference of two frames is r² + 1/12 + g·level.
        SplittableRandom random = new SplittableRandom(11);
        FrameNoiseEstimator e = new FrameNoiseEstimator(W * H, 1, 0);
        byte[] none = new byte[W * H];
        for (int k = 0; k < 40; k++) {
            e.observe(ByteBuffer.wrap(noisyFrame(3.0, 0.4, random)), 8, none, 250);
        }
        e.refit();
        assertEquals(3.0, e.readNoise8(), 0.15);
        assertEquals(0.4, e.shotGain8(), 0.03);
    }

    @Test
    void shouldReadTwoByteFramesInEightBitCounts() {
        SplittableRandom random = new SplittableRandom(12);
        FrameNoiseEstimator e = new FrameNoiseEstimator(W * H, 1, 0);
        byte[] none = new byte[W * H];
        for (int k = 0; k < 40; k++) {
            byte[] px8 = noisyFrame(2.0, 0, random);
            ByteBuffer b = ByteBuffer.allocate(2 * W * H).order(ByteOrder.LITTLE_ENDIAN);
            for (byte v : px8) {
                b.putShort((short) ((v & 0xFF) * 1023 / 255)); // 10-bit counts
            }
            b.flip();
            e.observe(b, 10, none, 250);
        }
        e.refit();
        assertEquals(2.0, e.readNoise8(), 0.15);
    }

    @Test
    void shouldLeaveOutPixelsTheEventsSayChanged() {
        SplittableRandom random = new SplittableRandom(13);
        FrameNoiseEstimator e = new FrameNoiseEstimator(W * H, 1, 0);
        byte[] changed = new byte[W * H];
        for (int k = 0; k < 40; k++) {
            byte[] px = noisyFrame(2.0, 0, random);
            for (int i = 0; i < px.length; i += 2) { // every other pixel flips between two levels, with events
                px[i] = (byte) (k % 2 == 0 ? 40 : 200);
                changed[i] = 1;
            }
            e.observe(ByteBuffer.wrap(px), 8, changed, 250);
        }
        e.refit();
        assertEquals(2.0, e.readNoise8(), 0.15);
    }

    @Test
    void kalmanFusionShouldLearnTheNoiseOfItsFramesWhenAsked() {
        SplittableRandom random = new SplittableRandom(14);
        KalmanFusion f = new KalmanFusion(W, H, 0.2, 0.1, 1, new FrameNoiseModel(0.5, 1, 0.98), true, "kalman-fusion");
        KalmanFusion fixed = new KalmanFusion(W, H, 0.2, 0.1, 1, new FrameNoiseModel(0.5, 1, 0.98), false, "kalman-fusion");
        EventBatch batch = new EventBatch(4);
        for (int k = 0; k < 60; k++) {
            batch.reset(k * 50_000L);
            batch.add(5, 5, k * 50_000L + 1_000, 1); // one pixel changes: it is left out, nothing else moves
            f.process(batch);
            byte[] px = noisyFrame(4.0, 0, random);
            f.applyFrame(k * 50_000L + 20_000, k * 50_000L + 30_000, ByteBuffer.wrap(px), 8);
            fixed.applyFrame(k * 50_000L + 20_000, k * 50_000L + 30_000, ByteBuffer.wrap(px), 8);
        }
        assertEquals(4.0, f.frameNoise().readNoise8(), 0.2);
        assertEquals(0, f.frameNoise().shotGain8(), 0.05);
        assertEquals(1, fixed.frameNoise().readNoise8(), "learning off: the configured model stands");
    }
}
