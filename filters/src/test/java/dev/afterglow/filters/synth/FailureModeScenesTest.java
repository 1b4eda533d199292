package dev.afterglow.filters.synth;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import org.junit.jupiter.api.Test;

/**
 * The three failure-mode scenes show their failure mode measurably at 160x120 under their own
 * sensor conditions ({@link SceneKind#sensor}).
 */
class FailureModeScenesTest {
    private static final int W = 160;
    private static final int H = 120;

    /** Runs {@code sensor} to {@code endUs}, returning its frames (copied) and counting labelled events. */
    private static final class Run {
        final SyntheticSensor sensor;
        final byte[][] frames;
        int frameCount;
        final long[] labelled = new long[4];
        long signalLeft;
        long signalCorner;

        Run(SceneKind kind, SensorConfig config, long endUs) {
            sensor = new SyntheticSensor(kind.create(config.width(), config.height(), config.seed()), config);
            frames = new byte[(int) (endUs / Math.max(1, config.frameIntervalUs())) + 1][];
            EventBatch batch = new EventBatch(1 << 16);
            while (sensor.timeUs() < endUs) {
                batch.reset(sensor.timeUs());
                sensor.step(Math.min(endUs, sensor.timeUs() + 2_000), batch);
                byte[] labels = sensor.labels();
                for (int i = 0; i < batch.size; i++) {
                    labelled[labels[i]]++;
                    if (labels[i] == EventLabel.SIGNAL) {
                        if (batch.x[i] < 0.4 * config.width()) {
                            signalLeft++;
                        } else if (batch.x[i] >= FloodlitHoistScene.CORNER_X * config.width()) {
                            signalCorner++;
                        }
                    }
                }
                for (SensorFrame f; (f = sensor.pollFrame()) != null; ) {
                    if (frameCount < frames.length) {
                        frames[frameCount++] = f.pixels().clone();
                    }
                }
            }
        }
    }

    @Test
    void floodlitHoistShouldClipTheLightAndLeaveTheCornerToReadNoise() {
        SensorConfig config = SceneKind.FLOODLIT_HOIST.sensor(W, H).seed(7).build();
        assertEquals(3.5, config.readNoiseDn(), 0.0);
        Run run = new Run(SceneKind.FLOODLIT_HOIST, config, 2_400_000); // one full swing period
        assertTrue(run.frameCount >= 40, "frames " + run.frameCount);

        // The floodlight and its pool clip: at least 5% of every frame at 255.
        for (int k = 0; k < run.frameCount; k++) {
            int clipped = 0;
            for (byte v : run.frames[k]) {
                clipped += (v & 255) == 255 ? 1 : 0;
            }
            assertTrue(clipped >= 0.05 * W * H, "frame " + k + ": " + clipped + " pixels at 255");
        }

        // A patch deep in the corner, below the crate's path: temporal mean and spread of each pixel.
        int x0 = (int) (0.8 * W);
        int y0 = (int) (0.82 * H);
        double meanSum = 0;
        double sdSum = 0;
        int n = 0;
        for (int y = y0; y < H; y++) {
            for (int x = x0; x < W; x++) {
                double s = 0;
                double s2 = 0;
                for (int k = 0; k < run.frameCount; k++) {
                    int v = run.frames[k][y * W + x] & 255;
                    s += v;
                    s2 += (double) v * v;
                }
                double mean = s / run.frameCount;
                meanSum += mean;
                sdSum += Math.sqrt(Math.max(0, s2 / run.frameCount - mean * mean));
                n++;
            }
        }
        double mean = meanSum / n;
        double sd = sdSum / n;
        // Rose criterion (A. Rose, 1948): a feature needs a signal-to-noise ratio of about 5 to be
        // told from noise; the corner's is well below.
        assertTrue(mean / sd < 3, "corner mean " + mean + " DN, temporal sd " + sd + " DN");
        assertTrue(sd > 2, "corner temporal sd " + sd + " DN");
        // The true image there varies by less than the read noise: what the frames show of it is noise.
        float[] truth = new float[W * H];
        run.sensor.groundTruthLog(0, truth);
        double ts = 0;
        double ts2 = 0;
        for (int y = y0; y < H; y++) {
            for (int x = x0; x < W; x++) {
                double dn = 255 * Math.exp(truth[y * W + x]) / config.fullScale();
                ts += dn;
                ts2 += dn * dn;
            }
        }
        double truthSd = Math.sqrt(ts2 / n - (ts / n) * (ts / n));
        assertTrue(truthSd < config.readNoiseDn() / 2, "true spread in the corner " + truthSd + " DN");
        assertTrue(ts / n < 10, "true corner level " + ts / n + " DN");

        // The crate swings across both: signal events in front of the light and inside the corner.
        assertTrue(run.signalLeft > 1000, "signal events left " + run.signalLeft);
        assertTrue(run.signalCorner > 1000, "signal events in the corner " + run.signalCorner);
    }

    @Test
    void stockroomPanShouldFireBackgroundActivityAtFiveHertzPerPixelInLowLight() {
        SensorConfig config = SceneKind.STOCKROOM_PAN.sensor(W, H).seed(7).build();
        long endUs = 2_000_000;
        Run run = new Run(SceneKind.STOCKROOM_PAN, config, endUs);
        double expected = 5.0 * W * H * endUs * 1e-6;
        long got = run.labelled[EventLabel.BACKGROUND];
        // Poisson count: standard deviation sqrt(expected); 5 of them is far beyond chance.
        assertTrue(Math.abs(got - expected) <= 5 * Math.sqrt(expected), got + " background events, expected " + expected);
        assertTrue(Math.abs(got - expected) <= 0.1 * expected, got + " background events, expected " + expected);

        // Low light: the frames use a small part of the 8-bit range.
        double sum = 0;
        for (int k = 0; k < run.frameCount; k++) {
            for (byte v : run.frames[k]) {
                sum += v & 255;
            }
        }
        double meanDn = sum / ((double) run.frameCount * W * H);
        assertTrue(meanDn > 2 && meanDn < 0.15 * 255, "mean frame level " + meanDn + " DN");

        // Slow: no faster than orchard-pan, and it holds still.
        Scene scene = SceneKind.STOCKROOM_PAN.create(W, H, 7);
        assertTrue(scene.maxSpeedPxPerS() <= SceneKind.ORCHARD_PAN.create(W, H, 7).maxSpeedPxPerS());
        assertEquals(0, scene.changedRegions(4_200_000, 5_800_000, new int[4]));
        assertEquals(0, scene.changedRegions(10_100_000, 11_900_000, new int[4]));
        assertEquals(1, scene.changedRegions(3_900_000, 4_200_000, new int[4]));
        assertTrue(SceneKind.STOCKROOM_PAN.slow() && SceneKind.STOCKROOM_PAN_DARK.slow());
    }

    @Test
    void rinkShotShouldLoseMostCrossingsToTheRefractoryPeriod() {
        SensorConfig config = SceneKind.RINK_SHOT.sensor(W, H).seed(7).build();
        assertEquals(800, config.refractoryUs());
        long endUs = 1_500_000;
        Run slowPixels = new Run(SceneKind.RINK_SHOT, config, endUs);
        long lost = slowPixels.sensor.refractoryLosses();
        long fired = slowPixels.sensor.signalEvents();
        assertTrue(lost >= 0.5 * (lost + fired), lost + " crossings lost, " + fired + " fired");

        // The same scene and thresholds without a refractory period: every crossing fires, and
        // there are exactly as many as the slow pixels fired and lost (the reference follows the
        // signal during the refractory period, so the crossings themselves do not change).
        Run ideal = new Run(SceneKind.RINK_SHOT, config.toBuilder().refractoryUs(0).build(), endUs);
        assertEquals(0, ideal.sensor.refractoryLosses());
        assertEquals(lost + fired, ideal.sensor.signalEvents());
        assertTrue(!SceneKind.RINK_SHOT.slow() && !SceneKind.FLOODLIT_HOIST.slow());
    }
}
