package dev.afterglow.filters.recon;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.StageCounters;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;

/**
 * Per-pixel uncertainty-weighted fusion of events and the sensor's own frames, after the
 * asynchronous Kalman filter for hybrid event/frame cameras of Z. Wang, Y. Ng, C. Scheerlinck and
 * R. Mahony (CVPR 2021), in a scalar form of our own: every pixel keeps a log-intensity estimate
 * {@code x} and its variance {@code P}.
 * <ul>
 * <li>Between measurements the scene may change: {@code P} grows by {@code q·dt} (a random walk
 *     with process noise q, log units² per second), so {@code x} itself does not move and readout
 *     is a copy, with no {@code exp} anywhere.</li>
 * <li>An event of polarity p adds {@code p·C} to {@code x} and its own uncertainty {@code R_e} to
 *     {@code P}: threshold mismatch and the chance that the event is noise.</li>
 * <li>A frame is a measurement {@code z} with variance {@code R} from {@link FrameNoiseModel}
 *     (shot, read and quantisation noise), fused with the gain {@code K = P/(P + R)}:
 *     {@code x += K·(z - x)}, {@code P = (1 - K)·P}. A saturated pixel is a censored measurement:
 *     it says only that the pixel is at least as bright as saturation, so an estimate at or above
 *     that level is left alone and one below it is pulled up towards it (with the variance of the
 *     level just below saturation). Drift of events under a clipped frame is bounded from below
 *     that way.</li>
 * </ul>
 * Where frames are good and events few, {@code P} stays small and the estimate holds the frame;
 * where frames are saturated or dark and noisy, R is large and events carry the pixel. With no
 * frames at all it is direct integration; with noiseless frames it is the frame.
 *
 * <p>Cost: an event is a subtraction of times, two multiply-adds and three array writes; a frame
 * one pass with a table lookup and a division per pixel; a readout one pass of double to float.
 * State: 8 bytes each for x, P and the time of the pixel's last update. A frame is applied at the
 * time given (its mid-exposure), as received: events the node applied after that time are in
 * {@code x} already and count against the frame for that pixel (the same approximation as the
 * complementary filter's frame swap).
 *
 * <p>Threading: single owner thread; events and frames in time order on that thread.
 */
public final class KalmanFusion implements FrameFusion {
    /** Variance of a pixel nothing is known about yet (log units²). */
    static final double UNKNOWN_VARIANCE = 1e6;
    /** Frames between fits of the learned noise model. */
    static final int FRAMES_PER_NOISE_FIT = 10;
    /** Longest frame interval whose cadence is tracked. */
    static final long MAX_FRAME_PERIOD_US = 2_000_000;

    private final int width;
    private final int height;
    private final double contrast;
    private final double processNoisePerUs;
    private final double eventVariance;
    private FrameNoiseModel frameNoise;
    /** Learns the frame noise online; null when the configured model stands. */
    private final FrameNoiseEstimator noiseEstimator;
    /** 1 where an event arrived since the last frame (for the noise estimator). */
    private final byte[] changedSinceFrame;
    private int framesSinceFit;
    private final double[] estimate;
    private final double[] variance;
    private final long[] updatedUs;
    /** The estimate when the tracked exposure opened. */
    private final float[] atExposureStart;
    /** Sum over the tracked exposure's events of p·C·(end - t)/(end - start). */
    private final float[] exposureShare;
    private final StageCounters counters = new StageCounters();
    // The exposure of the next expected frame, predicted from the last two frames' cadence.
    private static final int UNTRACKED = 0;
    private static final int ARMED = 1;
    private static final int OPEN = 2;
    private static final int CLOSED = 3;
    private int exposurePhase = UNTRACKED;
    private long exposureStartUs;
    private long exposureEndUs;
    private long framePeriodUs;
    private long lastFrameStartUs = Long.MIN_VALUE;
    /** Event time at which the exposure phase changes next (Long.MAX_VALUE: never). */
    private long nextMarkUs = Long.MAX_VALUE;
    private long latestEventUs = Long.MIN_VALUE;
    private long framesAligned;
    private final String description;
    /** Spatial denoising of each frame before it is fused; null when off. */
    private final LocalStatisticsFrameFilter frameFilter;
    /** The frame's counts, for the frame filter. */
    private final int[] counts;
    private long framesApplied;
    private long lateEvents;

    /**
     * @param contrast contrast threshold C in log units, 0.01 .. 2
     * @param processNoise q, log units² per second the scene may drift, (0, 1e4]
     * @param eventNoise standard deviation of one event's step as a fraction of C, [0, 10]
     * @param frameNoise the frames' noise model (the starting point when learning)
     * @param learnNoise whether to learn the frames' read noise and shot gain online ({@link FrameNoiseEstimator})
     * @param description the stage's parameters in chain-description syntax
     */
    public KalmanFusion(int width, int height, double contrast, double processNoise, double eventNoise,
            FrameNoiseModel frameNoise, boolean learnNoise, String description) {
        this(width, height, contrast, processNoise, eventNoise, frameNoise, learnNoise, 0, description);
    }

    /**
     * @param frameSmoothing radius of the {@link LocalStatisticsFrameFilter} applied to each frame
     *     before it is fused, 0 (off) .. 8
     */
    public KalmanFusion(int width, int height, double contrast, double processNoise, double eventNoise,
            FrameNoiseModel frameNoise, boolean learnNoise, int frameSmoothing, String description) {
        ReconstructionChecks.contrast("kalman-fusion", contrast);
        if (!(processNoise > 0 && processNoise <= 1e4)) {
            throw new IllegalArgumentException("kalman-fusion.process-noise=" + processNoise + " outside (0, 1e4]");
        }
        if (!(eventNoise >= 0 && eventNoise <= 10)) {
            throw new IllegalArgumentException("kalman-fusion.event-noise=" + eventNoise + " outside [0, 10]");
        }
        this.width = width;
        this.height = height;
        this.contrast = contrast;
        this.processNoisePerUs = processNoise * 1e-6;
        this.eventVariance = (eventNoise * contrast) * (eventNoise * contrast);
        this.frameNoise = frameNoise;
        this.description = description;
        int n = width * height;
        this.estimate = new double[n];
        this.variance = new double[n];
        this.updatedUs = new long[n];
        this.atExposureStart = new float[n];
        this.exposureShare = new float[n];
        this.noiseEstimator = learnNoise ? new FrameNoiseEstimator(n, frameNoise.readNoise8(), frameNoise.shotGain8()) : null;
        this.changedSinceFrame = learnNoise ? new byte[n] : null;
        this.frameFilter = frameSmoothing == 0 ? null : new LocalStatisticsFrameFilter(width, height, frameSmoothing);
        this.counts = frameSmoothing == 0 ? null : new int[n];
        java.util.Arrays.fill(variance, UNKNOWN_VARIANCE);
        java.util.Arrays.fill(updatedUs, Long.MIN_VALUE);
    }

    @Override
    public String name() {
        return "kalman-fusion";
    }

    @Override
    public void process(EventBatch batch) {
        int n = batch.size;
        double[] x = estimate;
        double[] p = variance;
        long[] last = updatedUs;
        int[] xs = batch.x;
        int[] ys = batch.y;
        int[] ts = batch.t;
        byte[] ps = batch.p;
        int w = width;
        double c = contrast;
        double q = processNoisePerUs;
        double re = eventVariance;
        long base = batch.timeBaseUs;
        float[] share = exposureShare;
        byte[] changed = changedSinceFrame;
        boolean open = exposurePhase == OPEN;
        double sharePerUs = open ? c / (exposureEndUs - exposureStartUs) : 0;
        long end = exposureEndUs;
        for (int i = 0; i < n; i++) {
            int idx = ys[i] * w + xs[i];
            long t = base + ts[i];
            if (t >= nextMarkUs) {
                passMark(t);
                open = exposurePhase == OPEN;
                sharePerUs = open ? c / (exposureEndUs - exposureStartUs) : 0;
                end = exposureEndUs;
            }
            if (open) {
                share[idx] += (float) (ps[i] * sharePerUs * (end - t));
            }
            if (changed != null) {
                changed[idx] = 1;
            }
            long before = last[idx];
            long dt = before == Long.MIN_VALUE ? 0 : t - before;
            if (dt < 0) {
                lateEvents++;
                dt = 0;
                t = before;
            }
            p[idx] += q * dt + re;
            x[idx] += ps[i] * c;
            last[idx] = t;
        }
        if (n > 0) {
            latestEventUs = Math.max(latestEventUs, base + ts[n - 1]);
        }
        counters.record(n, n);
    }

    /** The event stream reached {@link #nextMarkUs}: open or close the tracked exposure. */
    private void passMark(long t) {
        if (exposurePhase == ARMED || exposurePhase == CLOSED) {
            if (exposurePhase == CLOSED) {
                // The expected frame never came: track the next one of the cadence.
                long periods = Math.max(1, (t - exposureStartUs) / framePeriodUs);
                exposureStartUs += periods * framePeriodUs;
                exposureEndUs += periods * framePeriodUs;
            }
            openExposure();
            if (t >= exposureEndUs) {
                exposurePhase = CLOSED;
                nextMarkUs = exposureStartUs + framePeriodUs;
            }
        } else if (exposurePhase == OPEN) {
            exposurePhase = CLOSED;
            nextMarkUs = exposureStartUs + framePeriodUs;
        }
    }

    private void openExposure() {
        double[] x = estimate;
        float[] at = atExposureStart;
        for (int i = 0; i < x.length; i++) {
            at[i] = (float) x[i];
        }
        java.util.Arrays.fill(exposureShare, 0f);
        exposurePhase = OPEN;
        nextMarkUs = exposureEndUs;
    }

    @Override
    public void applyFrame(long timeUs, ByteBuffer pixels, int bitDepth) {
        update(timeUs, pixels, bitDepth, false);
    }

    /**
     * Applies a frame as the average of the pixel's log intensity over its exposure. When the
     * exposure is the one this filter predicted from the frames' cadence and tracked while its
     * events came in, the innovation is taken against the estimate's own average over the exposure
     * ({@code x(start) + Σ p·C·(end - t)/(end - start)} over the exposure's events), and the
     * correction moves the whole trajectory since: events after the exposure stay applied. Otherwise
     * (the first two frames, a changed cadence) the frame is taken as a measurement of the current
     * estimate.
     */
    @Override
    public void applyFrame(long exposureStartUs, long exposureEndUs, ByteBuffer pixels, int bitDepth) {
        boolean aligned = (exposurePhase == OPEN || exposurePhase == CLOSED || exposurePhase == ARMED)
                && exposureStartUs == this.exposureStartUs && exposureEndUs == this.exposureEndUs;
        boolean tracked = aligned && exposurePhase != ARMED; // ARMED: no event since the start, x is still x(start)
        update(exposureEndUs, pixels, bitDepth, tracked);
        if (aligned) {
            framesAligned++;
        }
        if (lastFrameStartUs != Long.MIN_VALUE && exposureStartUs > lastFrameStartUs
                && exposureStartUs - lastFrameStartUs <= MAX_FRAME_PERIOD_US && exposureEndUs > exposureStartUs) {
            framePeriodUs = exposureStartUs - lastFrameStartUs;
            this.exposureStartUs = exposureStartUs + framePeriodUs;
            this.exposureEndUs = exposureEndUs + framePeriodUs;
            // Events already past the next start: that exposure cannot be tracked; wait for the one after.
            exposurePhase = latestEventUs >= this.exposureStartUs ? CLOSED : ARMED;
            nextMarkUs = exposurePhase == ARMED ? this.exposureStartUs : this.exposureStartUs + framePeriodUs;
        } else {
            exposurePhase = UNTRACKED;
            nextMarkUs = Long.MAX_VALUE;
        }
        lastFrameStartUs = exposureStartUs;
    }

    private void update(long timeUs, ByteBuffer pixels, int bitDepth, boolean againstExposure) {
        int n = width * height;
        int bytesPer = bitDepth == 8 ? 1 : 2;
        if (bitDepth < 8 || bitDepth > 16) {
            throw new IllegalArgumentException("bit depth " + bitDepth + " outside 8..16");
        }
        if (pixels.remaining() != n * bytesPer) {
            throw new IllegalArgumentException("frame of " + pixels.remaining() + " bytes, expected " + n * bytesPer);
        }
        if (noiseEstimator != null) {
            noiseEstimator.observe(pixels, bitDepth, changedSinceFrame, 255 * frameNoise.saturatedFraction());
            java.util.Arrays.fill(changedSinceFrame, (byte) 0);
            if (++framesSinceFit >= FRAMES_PER_NOISE_FIT) {
                framesSinceFit = 0;
                if (noiseEstimator.refit()) {
                    frameNoise = new FrameNoiseModel(noiseEstimator.shotGain8(), noiseEstimator.readNoise8(),
                            frameNoise.saturatedFraction());
                }
            }
        }
        double[] zs = frameNoise.logs(bitDepth);
        double[] rs = frameNoise.variances(bitDepth);
        int max = (1 << bitDepth) - 1;
        ByteBuffer in = pixels.duplicate().order(ByteOrder.LITTLE_ENDIAN);
        int at = in.position();
        double[] x = estimate;
        double[] p = variance;
        long[] last = updatedUs;
        float[] start = atExposureStart;
        float[] share = exposureShare;
        double q = processNoisePerUs;
        int saturatedAt = frameNoise.saturatedAt(bitDepth);
        double floorLog = zs[saturatedAt - 1];
        double[] byLog = frameNoise.variancesAtLog(bitDepth);
        double floorVariance = rs[saturatedAt - 1];
        LocalStatisticsFrameFilter smoothing = frameFilter;
        double[] smoothed = null;
        float[] factor = null;
        if (smoothing != null) {
            int[] cs = counts;
            for (int i = 0; i < n; i++) {
                cs[i] = count(in, at, i, bytesPer, max);
            }
            smoothing.apply(cs, saturatedAt, frameNoise.shotGain(bitDepth), frameNoise.readVariance(bitDepth));
            smoothed = smoothing.filtered();
            factor = smoothing.varianceFactor();
        }
        for (int i = 0; i < n; i++) {
            int v = smoothing != null ? counts[i] : count(in, at, i, bytesPer, max);
            long before = last[i];
            if (before != Long.MIN_VALUE && timeUs > before) {
                p[i] += q * (timeUs - before);
            }
            double seen = againstExposure ? start[i] + share[i] : x[i];
            double z = zs[v];
            double r = p[i] >= UNKNOWN_VARIANCE ? rs[v] : byLog[frameNoise.logTableIndex(seen)];
            if (smoothed != null && factor[i] < 1) {
                z = frameNoise.logOfCount(smoothed[i], bitDepth);
                r *= factor[i];
            }
            if (v >= saturatedAt) {
                // Censored: the pixel is at least as bright as saturation, no more is known. An
                // estimate already there is left alone; one below is pulled up to the floor.
                if (seen >= floorLog) {
                    if (before == Long.MIN_VALUE || timeUs > before) {
                        last[i] = timeUs;
                    }
                    continue;
                }
                z = floorLog;
                r = floorVariance;
            }
            double prior = p[i];
            double gain = prior / (prior + r);
            x[i] += gain * (z - seen);
            p[i] = (1 - gain) * prior;
            if (before == Long.MIN_VALUE || timeUs > before) {
                last[i] = timeUs;
            }
        }
        framesApplied++;
    }

    /** Pixel {@code i}'s count, 8-bit or little-endian 16-bit clamped to the bit depth's full scale. */
    private static int count(ByteBuffer in, int at, int i, int bytesPer, int max) {
        return bytesPer == 1 ? in.get(at + i) & 0xFF : Math.min(max, in.getShort(at + 2 * i) & 0xFFFF);
    }

    @Override
    public void readLog(long timeUs, float[] out) {
        double[] x = estimate;
        for (int i = 0; i < x.length; i++) {
            out[i] = (float) x[i];
        }
    }

    /** Variance (log units²) of pixel {@code i}'s estimate as of its last update. */
    public double variance(int i) {
        return variance[i];
    }

    /** Estimate (log intensity) of pixel {@code i}. */
    public double estimate(int i) {
        return estimate[i];
    }

    /** Frames applied so far. */
    public long framesApplied() {
        return framesApplied;
    }

    /** The frame noise model in use (learned, when learning is on). */
    public FrameNoiseModel frameNoise() {
        return frameNoise;
    }

    /** Frames whose exposure was the predicted one (the rest were taken against the current estimate). */
    public long framesAligned() {
        return framesAligned;
    }

    /** Events older than their pixel's last update (applied as if at that time). */
    public long lateEvents() {
        return lateEvents;
    }

    @Override
    public int width() {
        return width;
    }

    @Override
    public int height() {
        return height;
    }

    @Override
    public double contrast() {
        return contrast;
    }

    @Override
    public StageCounters counters() {
        return counters;
    }

    @Override
    public String describe() {
        return description;
    }
}
