package dev.afterglow.filters.recon;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.StageCounters;

/**
 * High-pass filter of C. Scheerlinck, N. Barnes and R. Mahony, "Continuous-time intensity
 * estimation using event cameras", ACCV 2018: per pixel {@code L <- exp(-a·dt)·L + p·C}, with
 * cut-off a in rad/s and dt the time since the pixel's last update. Its transfer function from log
 * intensity to output is s/(s+a): accumulated noise decays, but a static background is lost.
 *
 * <p>Implemented with a shared {@link DecayClock}: double scaled state per pixel (float state drifted
 * by more than 1e-4·C on busy pixels at low cut-offs), two table lookups
 * and a multiply-add per event, one multiply per pixel at readout, and a rescaling pass at most
 * once per {@link DecayClock#spanUs()} of sensor time (under a second for a ≥ 24 rad/s, about 4 s
 * otherwise). The exact result does not depend on event order within the clock's span; an event
 * earlier than the clock's origin (time going back across a rescale) is applied at the origin and
 * counted in {@link #lateEvents()}.
 *
 * <p>Threading: single owner thread.
 */
public final class HighPassFilter implements Reconstruction {
    private final int width;
    private final int height;
    private final double contrast;
    private final double cutoffRadPerS;
    private final DecayClock clock;
    private final double[] state;
    private final StageCounters counters = new StageCounters();
    private long lateEvents;

    /**
     * @param width sensor width
     * @param height sensor height
     * @param contrast contrast threshold C in log units, 0.01 .. 2
     * @param cutoffRadPerS cut-off a in rad/s, (0, 1e4]
     */
    public HighPassFilter(int width, int height, double contrast, double cutoffRadPerS) {
        ReconstructionChecks.contrast("high-pass", contrast);
        ReconstructionChecks.cutoff("high-pass.cutoff", cutoffRadPerS, false);
        this.width = width;
        this.height = height;
        this.contrast = contrast;
        this.cutoffRadPerS = cutoffRadPerS;
        this.clock = new DecayClock(cutoffRadPerS);
        this.state = new double[width * height];
    }

    @Override
    public String name() {
        return "high-pass";
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
        double[] s = state;
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
                renormalise(batch.timeBaseUs + ts[i]);
                base = batch.timeBaseUs - clock.originUs();
                d = base + ts[i];
            } else if (d < 0) {
                lateEvents++;
                d = 0;
            }
            s[ys[i] * w + xs[i]] += ps[i] * c * clock.growth0((int) d);
        }
        counters.record(n, n);
    }

    private void renormalise(long newOriginUs) {
        double f = clock.scaleAt(0, newOriginUs);
        StateScaling.scale(state, f);
        clock.moveOrigin(newOriginUs);
    }

    @Override
    public void readLog(long timeUs, float[] out) {
        double f = clock.scaleAt(0, timeUs);
        double[] s = state;
        int n = s.length;
        if (f < Float.MIN_NORMAL) {
            java.util.Arrays.fill(out, 0, n, 0f);
            return;
        }
        for (int i = 0; i < n; i++) {
            out[i] = (float) (s[i] * f);
        }
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

    /** Cut-off a in rad/s. */
    public double cutoffRadPerS() {
        return cutoffRadPerS;
    }

    @Override
    public StageCounters counters() {
        return counters;
    }

    @Override
    public String describe() {
        return "high-pass(cutoff=" + cutoffRadPerS + "rad/s, contrast=" + contrast + ")";
    }
}
