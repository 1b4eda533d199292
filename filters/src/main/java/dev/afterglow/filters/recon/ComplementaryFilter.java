package dev.afterglow.filters.recon;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.StageCounters;
import java.nio.ByteBuffer;

/**
 * Complementary filter of C. Scheerlinck, N. Barnes and R. Mahony, "Continuous-time intensity
 * estimation using event cameras", ACCV 2018: fuses the sensor's own frames (log intensity L_F)
 * with events. Between events a pixel relaxes towards L_F,
 * {@code L(t) = exp(-a·(t - t_k))·(L(t_k) - L_F) + L_F}, and each event adds {@code p·C}: frames
 * pass through the low-pass a/(s+a), events through the high-pass s/(s+a), and the two sum to one.
 *
 * <p>As in the paper, the cut-off is lowered where the frame is saturated or dark, so events are
 * trusted there: each pixel belongs to class 0 (well exposed, cut-off {@code a}) or class 1
 * (saturated or dark in the latest frame, cut-off {@code aLow}). The class and L_F change only
 * when a frame is applied.
 *
 * <p>Implementation: the deviation {@code D = L - L_F} decays exponentially, so it is kept as
 * scaled double state on a {@link DecayClock} with one origin and one cut-off per class; an event
 * costs a class lookup, two table lookups and a multiply-add, readout {@code L_F + D·scale[class]}
 * per pixel. Applying a frame moves the origin to the frame's time in the same pass that swaps L_F.
 *
 * <p>Threading: single owner thread; frames and events must be applied in time order by that
 * thread.
 */
public final class ComplementaryFilter implements FrameFusion {
    private final int width;
    private final int height;
    private final double contrast;
    private final double cutoffRadPerS;
    private final double lowCutoffRadPerS;
    private final SensorFrameLog frameLog;
    private final DecayClock clock;
    private final double[] deviation;
    private final float[] frameLogIntensity;
    private final byte[] cls;
    private final float[] scratchLog;
    private final byte[] scratchCls;
    private final StageCounters counters = new StageCounters();
    private long lateEvents;
    private long framesApplied;
    private long lastFrameUs;

    /**
     * @param contrast contrast threshold C in log units, 0.01 .. 2
     * @param cutoffRadPerS cut-off a for well-exposed pixels, (0, 1e4] rad/s
     * @param lowCutoffRadPerS cut-off for saturated or dark pixels, [0, a] rad/s
     * @param saturatedFraction a frame pixel at or above this fraction of full scale is saturated
     * @param darkFraction a frame pixel at or below this fraction of full scale is dark
     */
    public ComplementaryFilter(int width, int height, double contrast, double cutoffRadPerS,
            double lowCutoffRadPerS, double saturatedFraction, double darkFraction) {
        ReconstructionChecks.contrast("complementary", contrast);
        ReconstructionChecks.cutoff("complementary.cutoff", cutoffRadPerS, false);
        ReconstructionChecks.cutoff("complementary.low-cutoff", lowCutoffRadPerS, true);
        if (lowCutoffRadPerS > cutoffRadPerS) {
            throw new IllegalArgumentException("complementary.low-cutoff=" + lowCutoffRadPerS
                    + "rad/s > complementary.cutoff=" + cutoffRadPerS + "rad/s");
        }
        this.width = width;
        this.height = height;
        this.contrast = contrast;
        this.cutoffRadPerS = cutoffRadPerS;
        this.lowCutoffRadPerS = lowCutoffRadPerS;
        this.frameLog = new SensorFrameLog(saturatedFraction, darkFraction);
        this.clock = new DecayClock(cutoffRadPerS, lowCutoffRadPerS);
        int n = width * height;
        this.deviation = new double[n];
        this.frameLogIntensity = new float[n];
        this.cls = new byte[n];
        this.scratchLog = new float[n];
        this.scratchCls = new byte[n];
    }

    @Override
    public String name() {
        return "complementary";
    }

    @Override
    public void process(EventBatch batch) {
        int n = batch.size;
        if (n == 0) {
            return;
        }
        if (!clock.started()) {
            // Start at the earliest event, not the batch base, so results do not depend on batching.
            clock.start(batch.minTimeUs());
        }
        double[] s = deviation;
        byte[] k = cls;
        int[] xs = batch.x;
        int[] ys = batch.y;
        int[] ts = batch.t;
        byte[] ps = batch.p;
        int w = width;
        double c = contrast;
        long span = clock.spanUs();
        long base = batch.timeBaseUs - clock.originUs();
        for (int i = 0; i < n; i++) {
            long d = base + ts[i];
            if (d >= span) {
                moveOrigin(batch.timeBaseUs + ts[i]);
                base = batch.timeBaseUs - clock.originUs();
                d = base + ts[i];
            } else if (d < 0) {
                lateEvents++;
                d = 0;
            }
            int idx = ys[i] * w + xs[i];
            s[idx] += ps[i] * c * clock.growth(k[idx], (int) d);
        }
        counters.record(n, n);
    }

    private void moveOrigin(long newOriginUs) {
        double f0 = clock.scaleAt(0, newOriginUs);
        double f1 = clock.scaleAt(1, newOriginUs);
        double[] s = deviation;
        byte[] k = cls;
        for (int i = 0; i < s.length; i++) {
            double v = s[i] * (k[i] == 0 ? f0 : f1);
            s[i] = Math.abs(v) < StateScaling.FLUSH ? 0 : v;
        }
        clock.moveOrigin(newOriginUs);
    }

    /**
     * Applies a sensor frame taken at {@code timeUs} (e.g. mid-exposure).
     *
     * @param pixels row-major, width*height values: one byte each for {@code bitDepth} 8, two
     *     little-endian bytes each for 9..16
     * @throws IllegalArgumentException if the size or bit depth is wrong
     */
    public void applyFrame(long timeUs, ByteBuffer pixels, int bitDepth) {
        frameLog.convert(pixels, bitDepth, width * height, scratchLog, scratchCls);
        applyLogFrame(timeUs, scratchLog, scratchCls);
    }

    /**
     * Applies a frame already in log intensity with its per-pixel class (0: well exposed,
     * 1: saturated or dark). The arrays are copied.
     */
    public void applyLogFrame(long timeUs, float[] logIntensity, byte[] pixelClass) {
        int n = width * height;
        if (logIntensity.length < n || pixelClass.length < n) {
            throw new IllegalArgumentException("frame arrays shorter than " + n + " pixels");
        }
        if (!clock.started()) {
            clock.start(timeUs);
        }
        double f0 = clock.scaleAt(0, timeUs);
        double f1 = clock.scaleAt(1, timeUs);
        double[] s = deviation;
        float[] lf = frameLogIntensity;
        byte[] k = cls;
        for (int i = 0; i < n; i++) {
            double level = lf[i] + s[i] * (k[i] == 0 ? f0 : f1);
            float next = logIntensity[i];
            double v = level - next;
            s[i] = Math.abs(v) < StateScaling.FLUSH ? 0 : v;
            lf[i] = next;
            k[i] = pixelClass[i] == 0 ? (byte) 0 : (byte) 1;
        }
        clock.moveOrigin(timeUs);
        framesApplied++;
        lastFrameUs = timeUs;
    }

    @Override
    public void readLog(long timeUs, float[] out) {
        double f0 = clock.scaleAt(0, timeUs);
        double f1 = clock.scaleAt(1, timeUs);
        double[] s = deviation;
        float[] lf = frameLogIntensity;
        byte[] k = cls;
        for (int i = 0; i < s.length; i++) {
            out[i] = (float) (lf[i] + s[i] * (k[i] == 0 ? f0 : f1));
        }
    }

    /** Sensor frames applied so far. */
    public long framesApplied() {
        return framesApplied;
    }

    /** Time of the latest applied sensor frame; 0 if none. */
    public long lastFrameUs() {
        return lastFrameUs;
    }

    /** Events applied at the clock's origin because they were older than it. */
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
        return "complementary(cutoff=" + cutoffRadPerS + "rad/s, low-cutoff=" + lowCutoffRadPerS
                + "rad/s, contrast=" + contrast + ", saturated=" + frameLog.saturatedFraction()
                + ", dark=" + frameLog.darkFraction() + ")";
    }
}
