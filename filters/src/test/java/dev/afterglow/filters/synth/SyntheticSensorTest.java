package dev.afterglow.filters.synth;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class SyntheticSensorTest {
    /** z of the two-sided 99% bound of a normal deviate (standard normal table). */
    private static final double Z99 = 2.5758;

    /** Every event and frame a sensor produced, flattened for comparison. */
    record Recording(long[] times, int[] xs, int[] ys, byte[] ps, byte[] labels, List<byte[]> frames, List<Long> frameEnds) {
        int size() {
            return times.length;
        }
    }

    static Recording record(SyntheticSensor sensor, long endUs, long[] stepTargets, int capacity) {
        EventBatch batch = new EventBatch(capacity);
        List<long[]> ev = new ArrayList<>();
        List<byte[]> frames = new ArrayList<>();
        List<Long> frameEnds = new ArrayList<>();
        int k = 0;
        while (sensor.timeUs() < endUs) {
            long target = k < stepTargets.length ? Math.min(endUs, Math.max(sensor.timeUs(), stepTargets[k])) : endUs;
            batch.reset(sensor.timeUs());
            sensor.step(target, batch);
            if (sensor.timeUs() >= target) {
                k++;
            }
            byte[] labels = sensor.labels();
            for (int i = 0; i < batch.size; i++) {
                ev.add(new long[] {batch.timeUs(i), batch.x[i], batch.y[i], batch.p[i], labels[i]});
            }
            for (SensorFrame f; (f = sensor.pollFrame()) != null; ) {
                frames.add(f.pixels().clone());
                frameEnds.add(f.exposureEndUs());
            }
        }
        int n = ev.size();
        long[] t = new long[n];
        int[] x = new int[n];
        int[] y = new int[n];
        byte[] p = new byte[n];
        byte[] l = new byte[n];
        for (int i = 0; i < n; i++) {
            long[] e = ev.get(i);
            t[i] = e[0];
            x[i] = (int) e[1];
            y[i] = (int) e[2];
            p[i] = (byte) e[3];
            l[i] = (byte) e[4];
        }
        return new Recording(t, x, y, p, l, frames, frameEnds);
    }

    static long[] everyUs(long stepUs, long endUs) {
        long[] t = new long[(int) (endUs / stepUs) + 1];
        for (int i = 0; i < t.length; i++) {
            t[i] = (i + 1) * stepUs;
        }
        return t;
    }

    private static TestScenes.Ramp ramp(int w, int h, long durationUs, long seed, double maxSize) {
        SplittableRandom r = new SplittableRandom(seed);
        double[] base = new double[w * h];
        double[] size = new double[w * h];
        for (int i = 0; i < base.length; i++) {
            base[i] = -2 + 2 * r.nextDouble();
            size[i] = (0.3 + (maxSize - 0.3) * r.nextDouble()) * ((i / w) % 2 == 0 ? 1 : -1);
        }
        return new TestScenes.Ramp(w, h, durationUs, base, size);
    }

    @Test
    void shouldEmitFloorOfRampOverThresholdAtEveryPixel() {
        // Event generation model (Gallego et al., "Event-based Vision: A Survey", IEEE TPAMI 2022,
        // eq. 1-2, from memory): a pixel fires each time its log intensity moves by its contrast
        // threshold C from the level of its last event, so a ramp of size D gives floor(|D|/C)
        // events of the ramp's sign.
        int w = 64;
        int h = 48;
        TestScenes.Ramp scene = ramp(w, h, 1_000_000, 5, 3.0);
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().mismatch(0.03).frames(0, 1).seed(9).build();
        SyntheticSensor sensor = new SyntheticSensor(scene, cfg);
        Recording rec = record(sensor, 1_200_000, everyUs(7_000, 1_200_000), 1 << 16);
        int[] on = new int[w * h];
        int[] off = new int[w * h];
        for (int i = 0; i < rec.size(); i++) {
            assertEquals(EventLabel.SIGNAL, rec.labels()[i]);
            if (rec.ps()[i] > 0) {
                on[rec.ys()[i] * w + rec.xs()[i]]++;
            } else {
                off[rec.ys()[i] * w + rec.xs()[i]]++;
            }
        }
        double c = cfg.contrast();
        double sigma = cfg.mismatch();
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double d = scene.size(x, y);
                double threshold = d > 0 ? sensor.thresholdOn(x, y) : sensor.thresholdOff(x, y);
                int expected = (int) Math.floor(Math.abs(d) / threshold);
                assertEquals(expected, d > 0 ? on[i] : off[i], "pixel " + x + "," + y);
                assertEquals(0, d > 0 ? off[i] : on[i], "pixel " + x + "," + y);
                // Within the mismatch: the threshold lies within 5 standard deviations of C.
                int fewest = (int) Math.floor(Math.abs(d) / (c * (1 + 5 * sigma)));
                int most = (int) Math.floor(Math.abs(d) / (c * (1 - 5 * sigma)));
                int got = d > 0 ? on[i] : off[i];
                assertTrue(got >= fewest && got <= most, "pixel " + x + "," + y + ": " + got + " outside [" + fewest + ", " + most + "]");
            }
        }
    }

    @Test
    void shouldStampEventsAtTheRampsCrossingTimes() {
        // Event generation model: on a linear ramp L0 + D·t/T the k-th event is at t = T·k·C/|D|;
        // stamps are whole microseconds.
        int w = 32;
        int h = 24;
        long durationUs = 1_000_000;
        TestScenes.Ramp scene = ramp(w, h, durationUs, 6, 2.0);
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().frames(0, 1).build();
        Recording rec = record(new SyntheticSensor(scene, cfg), durationUs, everyUs(10_000, durationUs), 1 << 16);
        int[] seen = new int[w * h];
        assertTrue(rec.size() > 3000, "events " + rec.size());
        for (int i = 0; i < rec.size(); i++) {
            int x = rec.xs()[i];
            int y = rec.ys()[i];
            int k = ++seen[y * w + x];
            double exact = durationUs * k * cfg.contrast() / Math.abs(scene.size(x, y));
            assertEquals(exact, rec.times()[i], 1.0, "event " + k + " of pixel " + x + "," + y);
            if (i > 0) {
                assertTrue(rec.times()[i] >= rec.times()[i - 1], "time order at " + i);
            }
        }
    }

    @Test
    void shouldMatchTheReferenceEventGenerationModel() {
        // Reference: EventGenerationModel, the ideal model kept as the naive implementation. Values
        // are multiples of 2^-6 and C = 0.25, so float and double arithmetic agree exactly. The
        // sensor stamps events inside (t0, t1] of a step, so an event the model puts at t0 is at
        // t0 + 1; within a microsecond both order events by pixel, compared here as sorted lists.
        int w = 40;
        int h = 30;
        int steps = 60;
        long stepUs = 1000;
        SplittableRandom r = new SplittableRandom(17);
        float[][] frames = new float[steps + 1][w * h];
        for (int i = 0; i < w * h; i++) {
            frames[0][i] = (r.nextInt(256) - 128) / 64f;
        }
        for (int k = 1; k <= steps; k++) {
            for (int i = 0; i < w * h; i++) {
                frames[k][i] = frames[k - 1][i] + (r.nextInt(97) - 48) / 64f;
            }
        }
        Scene scene = new TestScenes.Analytic(w, h, 0, Long.MAX_VALUE, 0) {
            @Override
            float value(int x, int y, long timeUs) {
                return frames[(int) (timeUs / stepUs)][y * w + x];
            }
        };
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().contrast(0.25).frames(0, 1).maxStepUs((int) stepUs).build();
        SyntheticSensor sensor = new SyntheticSensor(scene, cfg);
        assertEquals(stepUs, sensor.renderStepUs());
        EventGenerationModel model = new EventGenerationModel(w, h, 0.25);
        double[] level = new double[w * h];
        for (int i = 0; i < level.length; i++) {
            level[i] = frames[0][i];
        }
        model.start(0, level);
        EventBatch a = new EventBatch(1 << 16);
        EventBatch b = new EventBatch(1 << 16);
        long total = 0;
        for (int k = 1; k <= steps; k++) {
            long t0 = (k - 1) * stepUs;
            long t1 = k * stepUs;
            for (int i = 0; i < level.length; i++) {
                level[i] = frames[k][i];
            }
            a.reset(t0);
            model.advance(t1, level, a);
            b.reset(t0);
            sensor.step(t1, b);
            assertEquals(a.size, b.size, "step " + k);
            long[] fromModel = new long[a.size];
            long[] fromSensor = new long[b.size];
            for (int i = 0; i < a.size; i++) {
                fromModel[i] = key(Math.max(t0 + 1, a.timeUs(i)), a.y[i] * w + a.x[i], a.p[i]);
                fromSensor[i] = key(b.timeUs(i), b.y[i] * w + b.x[i], b.p[i]);
            }
            Arrays.sort(fromModel);
            Arrays.sort(fromSensor);
            assertArrayEquals(fromModel, fromSensor, "step " + k);
            total += a.size;
        }
        assertTrue(total > 10_000, "events " + total);
    }

    private static long key(long t, int pixel, byte p) {
        return (t << 32) | ((long) pixel << 1) | (p > 0 ? 1 : 0);
    }

    @Test
    void shouldDrawThresholdMismatchWithTheConfiguredSpread() {
        // Sampling statistics of a normal sample (textbook): the sample mean lies within
        // z·s/sqrt(n) of the true mean, and (n-1)s²/σ² is chi-square with n-1 degrees of freedom
        // (normal approximation for large n: s²/σ² within 1 ± z·sqrt(2/(n-1))); 99% bounds.
        int w = 120;
        int h = 90;
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().mismatch(0.04).frames(0, 1).seed(21).build();
        SyntheticSensor sensor = new SyntheticSensor(new TestScenes.Still(w, h, new float[w * h]), cfg);
        int n = 2 * w * h;
        double sum = 0;
        double sq = 0;
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                for (double v : new double[] {sensor.thresholdOn(x, y), sensor.thresholdOff(x, y)}) {
                    double z = v / cfg.contrast() - 1;
                    sum += z;
                    sq += z * z;
                }
            }
        }
        double mean = sum / n;
        double var = (sq - n * mean * mean) / (n - 1);
        double sigma = cfg.mismatch();
        assertTrue(Math.abs(mean) < Z99 * sigma / Math.sqrt(n), "mean " + mean);
        double ratio = var / (sigma * sigma);
        assertTrue(Math.abs(ratio - 1) < Z99 * Math.sqrt(2.0 / (n - 1)), "variance ratio " + ratio);
    }

    @Test
    void shouldEmitBackgroundActivityAtTheConfiguredPoissonRate() {
        // Poisson process (textbook): N ~ Poisson(r·n·T) over n pixels and T seconds, so N lies in
        // μ ± z·sqrt(μ) (normal approximation, μ large); per-pixel counts have variance equal to
        // their mean, so sum((n_i - m)²)/m is chi-square with n-1 degrees of freedom
        // (Wilson-Hilferty approximation for the bounds); random polarity is Binomial(N, 1/2).
        int w = 64;
        int h = 48;
        double rate = 2.0;
        long durationUs = 60_000_000;
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().backgroundRateHz(rate).frames(0, 1).seed(33).build();
        Recording rec = record(new SyntheticSensor(new TestScenes.Still(w, h, new float[w * h]), cfg),
                durationUs, everyUs(50_000, durationUs), 1 << 14);
        int pixels = w * h;
        double mu = rate * pixels * durationUs * 1e-6;
        int n = rec.size();
        assertTrue(Math.abs(n - mu) < Z99 * Math.sqrt(mu), "events " + n + " vs expected " + mu);
        int[] perPixel = new int[pixels];
        int on = 0;
        for (int i = 0; i < n; i++) {
            assertEquals(EventLabel.BACKGROUND, rec.labels()[i]);
            perPixel[rec.ys()[i] * w + rec.xs()[i]]++;
            on += rec.ps()[i] > 0 ? 1 : 0;
        }
        assertTrue(Math.abs(on - n / 2.0) < Z99 * Math.sqrt(n / 4.0), "ON events " + on + " of " + n);
        double m = (double) n / pixels;
        double dispersion = 0;
        for (int c : perPixel) {
            dispersion += (c - m) * (c - m) / m;
        }
        int df = pixels - 1;
        double lo = df * Math.pow(1 - 2.0 / (9 * df) - Z99 * Math.sqrt(2.0 / (9 * df)), 3);
        double hi = df * Math.pow(1 - 2.0 / (9 * df) + Z99 * Math.sqrt(2.0 / (9 * df)), 3);
        assertTrue(dispersion > lo && dispersion < hi, "dispersion " + dispersion + " outside [" + lo + ", " + hi + "]");
    }

    @Test
    void shouldFireHotPixelsAtTheirRate() {
        // Poisson process (textbook): each hot pixel's count over T is Poisson(r·T); the total of
        // k pixels is Poisson(k·r·T). 99% bound on the total, 99.99% (z = 3.89) on each pixel.
        int w = 50;
        int h = 40;
        long durationUs = 10_000_000;
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().hotPixels(5, 300).frames(0, 1).seed(4).build();
        SyntheticSensor sensor = new SyntheticSensor(new TestScenes.Still(w, h, new float[w * h]), cfg);
        Recording rec = record(sensor, durationUs, everyUs(20_000, durationUs), 1 << 14);
        java.util.Map<Integer, Integer> counts = new java.util.HashMap<>();
        for (int i = 0; i < rec.size(); i++) {
            assertEquals(EventLabel.HOT_PIXEL, rec.labels()[i]);
            assertTrue(sensor.isHotPixel(rec.xs()[i], rec.ys()[i]));
            counts.merge(rec.ys()[i] * w + rec.xs()[i], 1, Integer::sum);
        }
        assertEquals(5, counts.size());
        double each = 300 * durationUs * 1e-6;
        for (int c : counts.values()) {
            assertTrue(Math.abs(c - each) < 3.89 * Math.sqrt(each), "hot pixel count " + c);
        }
        assertTrue(Math.abs(rec.size() - 5 * each) < Z99 * Math.sqrt(5 * each), "total " + rec.size());
    }

    @Test
    void shouldLoseCrossingsInsideTheRefractoryPeriod() {
        // Crossings every 63 us and a 100 us refractory period: after an event the next crossing
        // is lost and the one after fires, so 10 crossings give events at crossings 1, 3, 5, 7, 9.
        int w = 16;
        int h = 12;
        long rampUs = 630;
        double[] base = new double[w * h];
        double[] size = new double[w * h];
        Arrays.fill(size, 2.1); // 10.5 thresholds of 0.2
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().refractoryUs(100).frames(0, 1).maxStepUs((int) rampUs).build();
        SyntheticSensor sensor = new SyntheticSensor(new TestScenes.Ramp(w, h, rampUs, base, size), cfg);
        Recording rec = record(sensor, 10_000, everyUs(1000, 10_000), 1 << 12);
        int[] count = new int[w * h];
        long[] last = new long[w * h];
        Arrays.fill(last, -1_000_000);
        for (int i = 0; i < rec.size(); i++) {
            int p = rec.ys()[i] * w + rec.xs()[i];
            assertTrue(rec.times()[i] - last[p] >= 100, "interval " + (rec.times()[i] - last[p]));
            last[p] = rec.times()[i];
            count[p]++;
        }
        for (int c : count) {
            assertEquals(5, c);
        }
        assertEquals(5L * w * h, sensor.refractoryLosses());
    }

    @Test
    void shouldJitterTimestampsWithTheConfiguredSpread() {
        // Residual = stamp - exact crossing time = (rounding of the crossing) + round(σ·z): mean 0,
        // variance σ² + 1/12 + 1/12 (Sheppard's correction for rounding to whole microseconds).
        // Large-sample bounds (textbook): mean within z·s/sqrt(n), s²/σ_e² within 1 ± z·sqrt(2/n)
        // for a normal residual; the residual is rounded, so that variance bound is widened by half.
        int w = 64;
        int h = 48;
        long durationUs = 1_000_000;
        TestScenes.Ramp scene = ramp(w, h, durationUs, 8, 3.0);
        double jitter = 5;
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().jitterUs(jitter).frames(0, 1).maxStepUs(100_000).seed(12).build();
        Recording rec = record(new SyntheticSensor(scene, cfg), durationUs, everyUs(100_000, durationUs), 1 << 16);
        int[] seen = new int[w * h];
        int n = rec.size();
        long[] sortedIdx = sortByPixelThenTime(rec, w);
        double sum = 0;
        double sq = 0;
        for (long packed : sortedIdx) {
            int i = (int) packed;
            int x = rec.xs()[i];
            int y = rec.ys()[i];
            int k = ++seen[y * w + x];
            double exact = durationUs * k * cfg.contrast() / Math.abs(scene.size(x, y));
            double d = rec.times()[i] - exact;
            sum += d;
            sq += d * d;
        }
        double mean = sum / n;
        double var = sq / n - mean * mean;
        double expected = jitter * jitter + 1.0 / 6;
        assertTrue(n > 20_000, "events " + n);
        assertTrue(Math.abs(mean) < Z99 * Math.sqrt(expected / n), "mean " + mean);
        assertTrue(Math.abs(var / expected - 1) < Z99 * Math.sqrt(2.0 / n) * 1.5, "variance " + var + " vs " + expected);
    }

    /** Indices sorted by pixel, then by the crossing order (the event's time without jitter is monotone). */
    private static long[] sortByPixelThenTime(Recording rec, int w) {
        long[] keys = new long[rec.size()];
        for (int i = 0; i < keys.length; i++) {
            keys[i] = ((long) (rec.ys()[i] * w + rec.xs()[i]) << 52) | (rec.times()[i] << 20) | i;
        }
        Arrays.sort(keys);
        for (int i = 0; i < keys.length; i++) {
            keys[i] = keys[i] & ((1 << 20) - 1);
        }
        return keys;
    }

    @Test
    void shouldExposeFramesWithSaturationNoiseFloorAndQuantisation() {
        // Frame model: value = round(I/fullScale·255 + read noise), clipped to [0, 255]. Middle
        // patch I = 0.4: mean 102, variance σ² + 1/12 (rounding, Sheppard); bright patch above full
        // scale: 255 exactly; dark patch (I ≈ 0): value 0 unless the noise exceeds 0.5, i.e. with
        // probability Φ(0.5/σ) = Φ(0.25) = 0.5987 for σ = 2 (standard normal table).
        int w = 60;
        int h = 40;
        float[] log = new float[w * h];
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                log[y * w + x] = (float) Math.log(x < 20 ? 0.4 : (x < 40 ? 3.0 : 1e-7));
            }
        }
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().frames(20, 10_000).frameRange(1.0, 2.0).seed(5).build();
        Recording rec = record(new SyntheticSensor(new TestScenes.Still(w, h, log), cfg), 1_000_000,
                everyUs(1000, 1_000_000), 1 << 10);
        assertEquals(20, rec.frames().size());
        assertEquals(10_000L, rec.frameEnds().get(0));
        assertEquals(960_000L, rec.frameEnds().get(19));
        double sum = 0;
        double sq = 0;
        int mid = 0;
        int zeros = 0;
        int dark = 0;
        for (byte[] f : rec.frames()) {
            for (int y = 0; y < h; y++) {
                for (int x = 0; x < w; x++) {
                    int v = f[y * w + x] & 0xFF;
                    if (x < 20) {
                        sum += v;
                        sq += v * v;
                        mid++;
                    } else if (x < 40) {
                        assertEquals(255, v);
                    } else {
                        dark++;
                        zeros += v == 0 ? 1 : 0;
                    }
                }
            }
        }
        double mean = sum / mid;
        double var = sq / mid - mean * mean;
        double expectedVar = 4 + 1.0 / 12;
        assertTrue(Math.abs(mean - 102) < Z99 * Math.sqrt(expectedVar / mid), "mean " + mean);
        assertTrue(Math.abs(var / expectedVar - 1) < Z99 * Math.sqrt(2.0 / mid), "variance " + var);
        double p = 0.5987;
        assertTrue(Math.abs(zeros - p * dark) < Z99 * Math.sqrt(dark * p * (1 - p)), "zeros " + zeros + " of " + dark);
    }

    @Test
    void shouldBlurFramesAlongTheMotionDuringTheExposure() {
        // Box-filter model of motion blur (textbook imaging): the recorded irradiance is the mean
        // over the exposure, so a pixel's value follows the share of the exposure the bright side
        // covered it; the blur spans speed·exposure pixels. The sensor samples the exposure at 8
        // times (half a pixel apart), so the mean is approximated to about 1/16 of a pixel.
        int w = 80;
        int h = 16;
        double speed = 400;
        TestScenes.MovingEdge scene = new TestScenes.MovingEdge(w, h, 10.0, speed, 0.8, 0.2);
        SensorConfig cfg = SensorConfig.builder(w, h).ideal().frames(10, 10_000).frameRange(1.0, 0).build();
        SyntheticSensor sensor = new SyntheticSensor(scene, cfg);
        assertEquals(8, sensor.exposureSamples());
        Recording rec = record(sensor, 20_000, everyUs(1000, 20_000), 1 << 16);
        byte[] frame = rec.frames().get(0); // exposure [0, 10 ms]: the edge moves from x = 10 to 14
        int blurred = 0;
        for (int x = 0; x < w; x++) {
            double cover = 0;
            int samples = 10_000;
            for (int s = 0; s < samples; s++) {
                cover += scene.cover(x, (s + 0.5) * 10_000.0 / samples);
            }
            cover /= samples;
            double expected = 255 * (0.2 + 0.6 * cover);
            int v = frame[5 * w + x] & 0xFF;
            assertEquals(expected, v, 4.0, "x=" + x);
            if (v > 0.2 * 255 + 2 && v < 0.8 * 255 - 2) {
                blurred++;
            }
        }
        assertTrue(blurred >= 4 && blurred <= 5, "blurred pixels " + blurred);
    }

    @Test
    void shouldRepeatEveryEventLabelAndFrameForTheSameSeedHoweverTimeIsSliced() {
        int w = 96;
        int h = 72;
        Scene scene = SceneKind.PARCEL_LINE.create(w, h, 3);
        SensorConfig cfg = SensorConfig.builder(w, h).seed(99).build();
        long end = 600_000;
        Recording a = record(new SyntheticSensor(scene, cfg), end, everyUs(1000, end), 1 << 16);
        SplittableRandom r = new SplittableRandom(1);
        long[] irregular = new long[2000];
        long t = 0;
        for (int i = 0; i < irregular.length; i++) {
            t += 1 + r.nextInt(3000);
            irregular[i] = t;
        }
        // A small batch forces the sensor to stop early and resume.
        Recording b = record(new SyntheticSensor(SceneKind.PARCEL_LINE.create(w, h, 3), cfg), end, irregular, 257);
        assertTrue(a.size() > 10_000, "events " + a.size());
        assertArrayEquals(a.times(), b.times());
        assertArrayEquals(a.xs(), b.xs());
        assertArrayEquals(a.ys(), b.ys());
        assertArrayEquals(a.ps(), b.ps());
        assertArrayEquals(a.labels(), b.labels());
        assertEquals(a.frames().size(), b.frames().size());
        for (int i = 0; i < a.frames().size(); i++) {
            assertArrayEquals(a.frames().get(i), b.frames().get(i), "frame " + i);
        }
        Recording c = record(new SyntheticSensor(scene, cfg.toBuilder().seed(100).build()), end, everyUs(1000, end), 1 << 16);
        assertFalse(Arrays.equals(a.times(), c.times()) && Arrays.equals(a.xs(), c.xs()));
    }

    @Test
    void shouldLabelSignalAndBothKindsOfNoise() {
        int w = 96;
        int h = 72;
        SensorConfig cfg = SensorConfig.builder(w, h).backgroundRateHz(5).hotPixels(3, 1000).seed(2).build();
        SyntheticSensor sensor = new SyntheticSensor(SceneKind.DOCK_DOOR.create(w, h, 1), cfg);
        Recording rec = record(sensor, 1_000_000, everyUs(1000, 1_000_000), 1 << 16);
        long[] byLabel = new long[3];
        for (int i = 0; i < rec.size(); i++) {
            byLabel[rec.labels()[i]]++;
            if (rec.labels()[i] == EventLabel.HOT_PIXEL) {
                assertTrue(sensor.isHotPixel(rec.xs()[i], rec.ys()[i]));
            }
        }
        assertEquals(sensor.signalEvents(), byLabel[EventLabel.SIGNAL]);
        assertEquals(sensor.backgroundEvents(), byLabel[EventLabel.BACKGROUND]);
        assertEquals(sensor.hotPixelEvents(), byLabel[EventLabel.HOT_PIXEL]);
        assertTrue(byLabel[0] > 0 && byLabel[1] > 0 && byLabel[2] > 0, Arrays.toString(byLabel));
    }

    @Test
    void shouldKeepTheLatestFourFramesWhenNobodyPolls() {
        int w = 32;
        int h = 24;
        SyntheticSensor sensor = new SyntheticSensor(new TestScenes.Still(w, h, new float[w * h]),
                SensorConfig.builder(w, h).ideal().frames(20, 10_000).build());
        assertEquals(10_000, sensor.nextFrameDueUs());
        sensor.step(400_000, new EventBatch(64)); // frames 0..7 end by then
        assertEquals(4, sensor.framesDropped());
        for (long k = 4; k < 8; k++) {
            SensorFrame f = sensor.pollFrame();
            assertEquals(k, f.index());
            assertEquals(k * 50_000, f.exposureStartUs());
            assertEquals(k * 50_000 + 5_000, f.midExposureUs());
        }
        assertNull(sensor.pollFrame());
        assertEquals(410_000, sensor.nextFrameDueUs());
    }

    @Test
    void shouldGiveTheSceneAsGroundTruth() {
        int w = 64;
        int h = 48;
        Scene scene = SceneKind.ORCHARD_PAN.create(w, h, 5);
        SyntheticSensor sensor = new SyntheticSensor(scene, SensorConfig.builder(w, h).build());
        float[] expected = new float[w * h];
        scene.render(1_234_567, expected);
        double[] truth = new double[w * h];
        sensor.groundTruthLog(1_234_567, truth);
        float[] truthF = new float[w * h];
        sensor.groundTruthLog(1_234_567, truthF);
        for (int i = 0; i < truth.length; i++) {
            assertEquals(expected[i], truth[i], 0.0);
            assertEquals(expected[i], truthF[i], 0.0);
        }
        float[] other = new float[w * h];
        scene.render(2_000_000, other);
        assertFalse(Arrays.equals(expected, other), "the pan moves the image");
    }

    @Test
    void shouldRefuseBadSettingsNamingThem() {
        assertMessage("sensor.contrast=3", () -> SensorConfig.builder(64, 48).contrast(3).build());
        assertMessage("sensor.mismatch=0.9 outside [0, 0.5]", () -> SensorConfig.builder(64, 48).mismatch(0.9).build());
        assertMessage("sensor.background-rate=-1Hz", () -> SensorConfig.builder(64, 48).backgroundRateHz(-1).build());
        assertMessage("sensor.exposure=60000us outside [1us, 50000us]", () -> SensorConfig.builder(64, 48).frames(20, 60_000).build());
        assertMessage("sensor.hot-pixels=1000 outside [0, 307]", () -> SensorConfig.builder(64, 48).hotPixels(1000, 100).build());
        assertMessage("sensor.width=4 outside [8, 8192]", () -> SensorConfig.builder(4, 48).build());
        assertMessage("does not match scene", () -> new SyntheticSensor(SceneKind.DOCK_DOOR.create(64, 48, 1),
                SensorConfig.builder(80, 48).build()));
        SyntheticSensor s = new SyntheticSensor(SceneKind.DOCK_DOOR.create(64, 48, 1), SensorConfig.builder(64, 48).build());
        s.step(5000, new EventBatch(1 << 14));
        assertMessage("time going backwards", () -> s.step(4000, new EventBatch(16)));
        assertNull(new SyntheticSensor(SceneKind.DOCK_DOOR.create(64, 48, 1), SensorConfig.builder(64, 48).build()).pollFrame());
    }

    private static void assertMessage(String part, org.junit.jupiter.api.function.Executable e) {
        IllegalArgumentException ex = assertThrows(IllegalArgumentException.class, e);
        assertTrue(ex.getMessage().contains(part), ex.getMessage());
    }
}
