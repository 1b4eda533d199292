package dev.afterglow.filters.synth;

import dev.afterglow.filters.EventBatch;
import java.util.Arrays;
import java.util.SplittableRandom;

/**
 * A simulated event sensor looking at a {@link Scene}: emits events with the event generation
 * model plus the usual sensor imperfections, produces the sensor's own 8-bit intensity frames, and
 * exposes the ground truth for evaluation. Deterministic: the same scene, configuration and seed
 * give the same events, labels and frames bit for bit, however the caller splits time into steps.
 *
 * <h2>Events</h2>
 * The scene is rendered on a fixed grid of times {@code k·stepUs} (see {@link #renderStepUs()}:
 * short enough that the image moves at most a quarter pixel per step, sub-millisecond for fast
 * scenes). Between two grid times each pixel's log irradiance is taken as linear, and a pixel
 * fires when it crosses its reference level ± its own threshold (the event generation model, as in
 * {@link EventGenerationModel}, which the tests use as the reference); the reference then moves by
 * exactly that threshold, so a log ramp of size D gives floor(|D|/C) events. On top of the ideal
 * model:
 * <ul>
 *   <li>threshold mismatch: per-pixel ON and OFF thresholds C·(1 + σ·z), z standard normal,
 *       clamped at C/4;</li>
 *   <li>refractory period: a crossing less than {@code refractoryUs} after the pixel's previous
 *       event is lost (no event, the reference still moves);</li>
 *   <li>background activity: independent Poisson events at {@code backgroundRateHz} per pixel,
 *       random polarity, drawn as one Poisson process over the whole array with a uniformly
 *       chosen pixel per event;</li>
 *   <li>hot pixels: {@code hotPixels} distinct pixels firing as Poisson processes at
 *       {@code hotPixelRateHz};</li>
 *   <li>timestamp jitter: Gaussian, standard deviation {@code jitterUs}, on signal events, kept
 *       inside their render step (drawn from a fixed table of 16384 standardised deviates).</li>
 * </ul>
 * Events of a render step are ordered by time (a stable counting sort; ties keep pixel order,
 * signal before noise), and every event carries an {@link EventLabel} in {@link #labels()}.
 *
 * <h2>Frames</h2>
 * Frame k is exposed over [k·T, k·T + exposure] (T = 1/frameRate). Its value is the irradiance
 * averaged over the exposure (the scene is sampled at up to 16 evenly spaced times, enough that it
 * moves at most half a pixel between samples, so motion blurs the frame), scaled so that
 * {@code fullScale} is 255, plus Gaussian read noise, rounded and clipped to [0, 255]: bright
 * areas saturate, dark areas sink into the noise floor. A frame is ready once sensor time reaches
 * the end of its exposure ({@link #pollFrame()}).
 *
 * <h2>Use</h2>
 * <pre>{@code
 * SyntheticSensor sensor = new SyntheticSensor(scene, SensorConfig.builder(w, h).seed(7).build());
 * EventBatch batch = new EventBatch(1 << 18);
 * long t = 0;
 * while (t < endUs) {
 *     long next = Math.min(t + 1000, sensor.nextFrameDueUs());
 *     batch.reset(sensor.timeUs());
 *     sensor.step(next, batch);              // events in (timeUs, next], time-ordered
 *     chain.process(batch);
 *     for (SensorFrame f; (f = sensor.pollFrame()) != null; ) {
 *         fusion.applyFrame(f.midExposureUs(), f.buffer(), 8);
 *     }
 *     t = sensor.timeUs();                   // == next unless the batch filled up
 * }
 * }</pre>
 *
 * <p>Cost: per render step one pass over the pixels the scene reports as changing (a comparison
 * with two precomputed levels per pixel), plus a few operations per event; nothing is allocated
 * per event (internal buffers grow by doubling until they fit the busiest step).
 *
 * <p>Threading: single owner thread.
 */
public final class SyntheticSensor {
    private static final int FRAME_RING = 4;
    /** Most motion, in pixels, between two render steps or two exposure samples. */
    private static final double STEP_SHIFT_PX = 0.25;
    private static final double SAMPLE_SHIFT_PX = 0.5;
    private static final int MAX_EXPOSURE_SAMPLES = 16;

    private final Scene scene;
    private final SensorConfig config;
    private final int width;
    private final int pixels;
    private final int stepUs;
    private final int exposureSamples;

    private final float[] thresholdOn;
    private final float[] thresholdOff;
    private final float[] reference;
    private final float[] high;
    private final float[] low;
    private final float[] last;
    private final long[] lastEventUs;
    private final float[] row;
    private final int[] rects;

    private final SplittableRandom noiseRandom;
    private final SplittableRandom hotRandom;
    private final SplittableRandom jitterRandom;
    private final SplittableRandom frameRandom;
    private final float[] gaussTable;
    private final double backgroundPerUs;
    private double nextBackgroundUs;
    private final int[] hotPixel;
    private final double[] hotNextUs;

    // Events of one render step before sorting (staged) and after (pending emission).
    private int[] stagedPixel = new int[4096];
    private int[] stagedOffset = new int[4096];
    private byte[] stagedPolarity = new byte[4096];
    private byte[] stagedLabel = new byte[4096];
    private int staged;
    private int[] pendingPixel = new int[4096];
    private int[] pendingOffset = new int[4096];
    private byte[] pendingPolarity = new byte[4096];
    private byte[] pendingLabel = new byte[4096];
    private int pendingCount;
    private int pendingRead;
    private long pendingBaseUs;
    private final int[] slotCount;

    private byte[] labels = new byte[0];
    private long timeUs;
    private long renderedUs;

    private final SensorFrame[] frameRing;
    private int frameHead;
    private int framesPending;
    private long nextFrameIndex;
    private final float[] frameSum;
    private final float[] rowSum;
    private final boolean[] averaged;
    private float[] truthScratch;

    private long signalEvents;
    private long backgroundEvents;
    private long hotPixelEvents;
    private long refractoryLosses;
    private long framesDropped;

    /**
     * Builds the sensor, draws the per-pixel thresholds and hot pixels, and takes the scene at time
     * 0 as every pixel's reference level.
     *
     * @throws IllegalArgumentException if the configuration's geometry differs from the scene's
     */
    public SyntheticSensor(Scene scene, SensorConfig config) {
        if (scene.width() != config.width() || scene.height() != config.height()) {
            throw new IllegalArgumentException("sensor " + config.width() + "x" + config.height()
                    + " does not match scene " + scene.name() + " " + scene.width() + "x" + scene.height());
        }
        this.scene = scene;
        this.config = config;
        this.width = config.width();
        this.pixels = config.width() * config.height();
        double speed = scene.maxSpeedPxPerS();
        long step = speed > 0 ? (long) Math.floor(STEP_SHIFT_PX / speed * 1e6) : config.maxStepUs();
        this.stepUs = (int) Math.max(10, Math.min(config.maxStepUs(), step));
        this.exposureSamples = (int) Math.max(1, Math.min(MAX_EXPOSURE_SAMPLES,
                Math.ceil(speed * config.exposureUs() * 1e-6 / SAMPLE_SHIFT_PX)));

        SplittableRandom root = new SplittableRandom(config.seed());
        SplittableRandom mismatchRandom = root.split();
        this.noiseRandom = root.split();
        this.hotRandom = root.split();
        this.jitterRandom = root.split();
        this.frameRandom = root.split();
        this.gaussTable = Gaussians.table(root.split());

        thresholdOn = new float[pixels];
        thresholdOff = new float[pixels];
        float c = (float) config.contrast();
        float floor = c / 4;
        for (int i = 0; i < pixels; i++) {
            thresholdOn[i] = config.mismatch() > 0
                    ? Math.max(floor, (float) (config.contrast() * (1 + config.mismatch() * Gaussians.next(mismatchRandom))))
                    : c;
            thresholdOff[i] = config.mismatch() > 0
                    ? Math.max(floor, (float) (config.contrast() * (1 + config.mismatch() * Gaussians.next(mismatchRandom))))
                    : c;
        }
        reference = new float[pixels];
        high = new float[pixels];
        low = new float[pixels];
        last = new float[pixels];
        lastEventUs = new long[pixels];
        Arrays.fill(lastEventUs, Long.MIN_VALUE / 2);
        scene.render(0, last);
        for (int i = 0; i < pixels; i++) {
            reference[i] = last[i];
            high[i] = last[i] + thresholdOn[i];
            low[i] = last[i] - thresholdOff[i];
        }
        row = new float[width];
        rects = new int[4 * Math.max(1, scene.maxRegions())];
        slotCount = new int[stepUs + 2];

        backgroundPerUs = config.backgroundRateHz() * pixels * 1e-6;
        nextBackgroundUs = backgroundPerUs > 0 ? exponential(noiseRandom, backgroundPerUs) : Double.POSITIVE_INFINITY;
        hotPixel = distinctPixels(hotRandom, config.hotPixels(), pixels);
        hotNextUs = new double[hotPixel.length];
        for (int k = 0; k < hotPixel.length; k++) {
            hotNextUs[k] = exponential(hotRandom, config.hotPixelRateHz() * 1e-6);
        }

        frameRing = new SensorFrame[FRAME_RING];
        for (int k = 0; k < FRAME_RING; k++) {
            frameRing[k] = new SensorFrame(width, config.height());
        }
        frameSum = config.frameRateHz() > 0 ? new float[pixels] : new float[0];
        rowSum = new float[width];
        averaged = new boolean[config.frameRateHz() > 0 ? pixels : 0];
    }

    private static int[] distinctPixels(SplittableRandom random, int count, int pixels) {
        int[] chosen = new int[count];
        java.util.BitSet used = new java.util.BitSet(pixels);
        for (int k = 0; k < count; k++) {
            int p;
            do {
                p = random.nextInt(pixels);
            } while (used.get(p));
            used.set(p);
            chosen[k] = p;
        }
        return chosen;
    }

    private static double exponential(SplittableRandom random, double ratePerUs) {
        return -StrictMath.log(1.0 - random.nextDouble()) / ratePerUs;
    }

    /** The scene. */
    public Scene scene() {
        return scene;
    }

    /** The configuration. */
    public SensorConfig config() {
        return config;
    }

    /** Render step in microseconds (fixed for the sensor's life). */
    public int renderStepUs() {
        return stepUs;
    }

    /** Scene samples averaged per frame exposure. */
    public int exposureSamples() {
        return exposureSamples;
    }

    /** Sensor time up to which every event has been emitted. */
    public long timeUs() {
        return timeUs;
    }

    /**
     * Appends to {@code out}, in time order, every event with a time in ({@link #timeUs()},
     * {@code toUs}], with its label at the same index in {@link #labels()}, then makes ready the
     * frames whose exposure has ended. If {@code out} fills up, stops early: {@link #timeUs()} then
     * tells how far it got, and the next call continues from there.
     *
     * @return the number of events appended
     * @throws IllegalArgumentException if {@code toUs} is before {@link #timeUs()}, or an event
     *     falls outside the range {@code out}'s time base allows
     */
    public int step(long toUs, EventBatch out) {
        if (toUs < timeUs) {
            throw new IllegalArgumentException("time going backwards: " + toUs + "us < " + timeUs + "us");
        }
        if (labels.length < out.capacity()) {
            labels = new byte[out.capacity()];
        }
        int start = out.size;
        int capacity = out.capacity();
        while (true) {
            boolean blocked = false;
            while (pendingRead < pendingCount) {
                long t = pendingBaseUs + pendingOffset[pendingRead];
                if (t > toUs) {
                    break;
                }
                if (out.size == capacity) {
                    timeUs = Math.max(timeUs, t - 1);
                    blocked = true;
                    break;
                }
                int p = pendingPixel[pendingRead];
                labels[out.size] = pendingLabel[pendingRead];
                out.add(p % width, p / width, t, pendingPolarity[pendingRead]);
                pendingRead++;
            }
            if (blocked) {
                break;
            }
            if (pendingRead < pendingCount || renderedUs >= toUs) {
                timeUs = toUs;
                break;
            }
            renderStep(renderedUs, renderedUs + stepUs);
            renderedUs += stepUs;
        }
        produceFrames();
        return out.size - start;
    }

    /**
     * Labels of the events appended by {@link #step}: {@code labels()[i]} belongs to
     * {@code out.x[i]} etc. for the batch last passed to {@code step} (valid until it is reset or
     * compacted). The array is reused and grows to the batch capacity.
     */
    public byte[] labels() {
        return labels;
    }

    private void renderStep(long t0, long t1) {
        staged = 0;
        int span = (int) (t1 - t0);
        int regions = scene.changedRegions(t0, t1, rects);
        float[] hi = high;
        float[] lo = low;
        float[] prev = last;
        float[] buf = row;
        int w = width;
        for (int r = 0; r < regions; r++) {
            int x0 = rects[4 * r];
            int y0 = rects[4 * r + 1];
            int x1 = rects[4 * r + 2];
            int y1 = rects[4 * r + 3];
            for (int y = y0; y < y1; y++) {
                scene.renderRow(t1, y, x0, x1, buf, 0);
                int base = y * w;
                for (int x = x0; x < x1; x++) {
                    int i = base + x;
                    float b = buf[x - x0];
                    if (b >= hi[i] || b <= lo[i]) {
                        cross(i, b, t0, span);
                    }
                    prev[i] = b;
                }
            }
        }
        stageNoise(t0, t1);
        sortStaged(t0, span);
    }

    /** Level crossings of pixel {@code i} moving linearly from {@code last[i]} to {@code b}. */
    private void cross(int i, float b, long t0, int span) {
        float a = last[i];
        float ref = reference[i];
        if (b > a) {
            float c = thresholdOn[i];
            while (b >= ref + c) {
                ref += c;
                emitSignal(i, t0, span, (double) (ref - a) / (double) (b - a), (byte) 1);
            }
        } else {
            float c = thresholdOff[i];
            while (b <= ref - c) {
                ref -= c;
                emitSignal(i, t0, span, (double) (a - ref) / (double) (a - b), (byte) -1);
            }
        }
        reference[i] = ref;
        high[i] = ref + thresholdOn[i];
        low[i] = ref - thresholdOff[i];
    }

    private void emitSignal(int i, long t0, int span, double fraction, byte polarity) {
        int offset = (int) Math.max(1, Math.min(span, Math.round(fraction * span)));
        long t = t0 + offset;
        if (t - lastEventUs[i] < config.refractoryUs()) {
            refractoryLosses++;
            return;
        }
        lastEventUs[i] = t;
        if (config.jitterUs() > 0) {
            float z = gaussTable[jitterRandom.nextInt() & (Gaussians.TABLE_SIZE - 1)];
            offset = (int) Math.max(1, Math.min(span, offset + Math.round(z * config.jitterUs())));
        }
        stage(i, offset, polarity, EventLabel.SIGNAL);
        signalEvents++;
    }

    private void stageNoise(long t0, long t1) {
        int span = (int) (t1 - t0);
        while (nextBackgroundUs <= t1) {
            int offset = (int) Math.max(1, Math.min(span, (long) Math.ceil(nextBackgroundUs) - t0));
            int p = noiseRandom.nextInt(pixels);
            stage(p, offset, noiseRandom.nextBoolean() ? (byte) 1 : (byte) -1, EventLabel.BACKGROUND);
            backgroundEvents++;
            nextBackgroundUs += exponential(noiseRandom, backgroundPerUs);
        }
        double hotPerUs = config.hotPixelRateHz() * 1e-6;
        for (int k = 0; k < hotPixel.length; k++) {
            while (hotNextUs[k] <= t1) {
                int offset = (int) Math.max(1, Math.min(span, (long) Math.ceil(hotNextUs[k]) - t0));
                stage(hotPixel[k], offset, hotRandom.nextBoolean() ? (byte) 1 : (byte) -1, EventLabel.HOT_PIXEL);
                hotPixelEvents++;
                hotNextUs[k] += exponential(hotRandom, hotPerUs);
            }
        }
    }

    private void stage(int pixel, int offset, byte polarity, byte label) {
        if (staged == stagedPixel.length) {
            int size = staged * 2;
            stagedPixel = Arrays.copyOf(stagedPixel, size);
            stagedOffset = Arrays.copyOf(stagedOffset, size);
            stagedPolarity = Arrays.copyOf(stagedPolarity, size);
            stagedLabel = Arrays.copyOf(stagedLabel, size);
        }
        stagedPixel[staged] = pixel;
        stagedOffset[staged] = offset;
        stagedPolarity[staged] = polarity;
        stagedLabel[staged] = label;
        staged++;
    }

    /** Stable counting sort of the staged events by offset into the pending arrays. */
    private void sortStaged(long t0, int span) {
        int n = staged;
        if (pendingPixel.length < n) {
            int size = Math.max(n, pendingPixel.length * 2);
            pendingPixel = new int[size];
            pendingOffset = new int[size];
            pendingPolarity = new byte[size];
            pendingLabel = new byte[size];
        }
        int[] count = slotCount;
        Arrays.fill(count, 0, span + 2, 0);
        for (int k = 0; k < n; k++) {
            count[stagedOffset[k] + 1]++;
        }
        for (int s = 1; s <= span + 1; s++) {
            count[s] += count[s - 1];
        }
        for (int k = 0; k < n; k++) {
            int j = count[stagedOffset[k]]++;
            pendingPixel[j] = stagedPixel[k];
            pendingOffset[j] = stagedOffset[k];
            pendingPolarity[j] = stagedPolarity[k];
            pendingLabel[j] = stagedLabel[k];
        }
        pendingCount = n;
        pendingRead = 0;
        pendingBaseUs = t0;
    }

    /** End of the exposure of the next frame not yet produced; {@link Long#MAX_VALUE} without frames. */
    public long nextFrameDueUs() {
        if (config.frameRateHz() <= 0) {
            return Long.MAX_VALUE;
        }
        return nextFrameIndex * config.frameIntervalUs() + config.exposureUs();
    }

    private void produceFrames() {
        while (nextFrameDueUs() <= timeUs) {
            SensorFrame f;
            if (framesPending == FRAME_RING) {
                frameHead = (frameHead + 1) % FRAME_RING;
                framesPending--;
                framesDropped++;
            }
            f = frameRing[(frameHead + framesPending) % FRAME_RING];
            expose(f, nextFrameIndex);
            framesPending++;
            nextFrameIndex++;
        }
    }

    private void expose(SensorFrame f, long index) {
        long start = index * config.frameIntervalUs();
        int exposure = config.exposureUs();
        int m = exposureSamples;
        float[] avg = frameSum;
        int w = width;
        int h = config.height();
        // Every pixel at the first sample time; only pixels the scene may change during the
        // exposure need the other samples.
        long first = sampleTime(start, exposure, 0, m);
        for (int y = 0; y < h; y++) {
            scene.renderRow(first, y, 0, w, row, 0);
            int base = y * w;
            for (int x = 0; x < w; x++) {
                avg[base + x] = ExpTable.exp(row[x]);
            }
        }
        if (m > 1) {
            int regions = scene.changedRegions(start, start + exposure, rects);
            float inv = 1f / m;
            for (int r = 0; r < regions; r++) {
                int x0 = rects[4 * r];
                int y0 = rects[4 * r + 1];
                int x1 = rects[4 * r + 2];
                int y1 = rects[4 * r + 3];
                for (int y = y0; y < y1; y++) {
                    int base = y * w;
                    Arrays.fill(rowSum, 0, x1 - x0, 0f);
                    for (int s = 1; s < m; s++) {
                        scene.renderRow(sampleTime(start, exposure, s, m), y, x0, x1, row, 0);
                        for (int x = x0; x < x1; x++) {
                            rowSum[x - x0] += ExpTable.exp(row[x - x0]);
                        }
                    }
                    for (int x = x0; x < x1; x++) {
                        int i = base + x;
                        if (!averaged[i]) { // rectangles may overlap: average each pixel once
                            averaged[i] = true;
                            avg[i] = (avg[i] + rowSum[x - x0]) * inv;
                        }
                    }
                }
            }
            for (int r = 0; r < regions; r++) {
                for (int y = rects[4 * r + 1]; y < rects[4 * r + 3]; y++) {
                    Arrays.fill(averaged, y * w + rects[4 * r], y * w + rects[4 * r + 2], false);
                }
            }
        }
        float gain = (float) (255.0 / config.fullScale());
        float noise = (float) config.readNoiseDn();
        byte[] out = f.pixels();
        for (int i = 0; i < pixels; i++) {
            float v = avg[i] * gain;
            if (noise > 0) {
                v += noise * gaussTable[frameRandom.nextInt() & (Gaussians.TABLE_SIZE - 1)];
            }
            int q = Math.round(v);
            out[i] = (byte) (q < 0 ? 0 : Math.min(q, 255));
        }
        f.index = index;
        f.exposureStartUs = start;
        f.exposureEndUs = start + exposure;
    }

    private static long sampleTime(long start, int exposure, int s, int m) {
        return start + Math.round((2.0 * s + 1) * exposure / (2.0 * m));
    }

    /**
     * The oldest ready frame not yet taken, or null. At most four frames wait; when a fifth is
     * produced the oldest is dropped ({@link #framesDropped()}). A returned frame's content stays
     * valid until four more frames have been produced.
     */
    public SensorFrame pollFrame() {
        if (framesPending == 0) {
            return null;
        }
        SensorFrame f = frameRing[frameHead];
        frameHead = (frameHead + 1) % FRAME_RING;
        framesPending--;
        return f;
    }

    /** The true log irradiance of every pixel at {@code timeUs} (row-major). */
    public void groundTruthLog(long timeUs, float[] out) {
        scene.render(timeUs, out);
    }

    /** The true log irradiance of every pixel at {@code timeUs} (row-major). */
    public void groundTruthLog(long timeUs, double[] out) {
        if (truthScratch == null) {
            truthScratch = new float[pixels];
        }
        scene.render(timeUs, truthScratch);
        for (int i = 0; i < pixels; i++) {
            out[i] = truthScratch[i];
        }
    }

    /** ON threshold of pixel (x, y) after mismatch. */
    public double thresholdOn(int x, int y) {
        return thresholdOn[y * width + x];
    }

    /** OFF threshold of pixel (x, y) after mismatch. */
    public double thresholdOff(int x, int y) {
        return thresholdOff[y * width + x];
    }

    /** True if pixel (x, y) is one of the hot pixels. */
    public boolean isHotPixel(int x, int y) {
        int p = y * width + x;
        for (int h : hotPixel) {
            if (h == p) {
                return true;
            }
        }
        return false;
    }

    /** Signal events emitted or waiting to be emitted (after refractory losses). */
    public long signalEvents() {
        return signalEvents;
    }

    /** Background-activity events generated. */
    public long backgroundEvents() {
        return backgroundEvents;
    }

    /** Hot-pixel events generated. */
    public long hotPixelEvents() {
        return hotPixelEvents;
    }

    /** Level crossings lost to the refractory period. */
    public long refractoryLosses() {
        return refractoryLosses;
    }

    /** Frames dropped because nobody polled them in time. */
    public long framesDropped() {
        return framesDropped;
    }
}
