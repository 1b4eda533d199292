package dev.afterglow.filters.denoise;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.StageCounters;

/**
 * Background-activity filter: passes an event only if at least {@code k} of its 8 neighbours had
 * an event within the correlation window dT before it.
 *
 * <p>With {@code k = 1} this is the nearest-neighbour background-activity filter of T. Delbruck,
 * "Frame-free dynamic digital vision" (2008); with {@code k > 1} it is the k-of-8 spatiotemporal
 * correlation filter of S. Guo and T. Delbruck, "Low cost and latency event camera background
 * activity denoising", IEEE TPAMI (2022). Every event (passed or not) stamps its pixel, so the
 * support a noise event finds from independent Poisson noise of rate r per pixel is Poisson with
 * mean 8·r·dT, and for k = 1 it passes with probability 1 - exp(-8·r·dT).
 *
 * <p>State: a timestamp map padded by one pixel on every side, so neighbours are read without
 * bounds checks; pixels outside the sensor never fire. Threading: single owner thread.
 */
public final class BackgroundActivityFilter implements EventStage {
    private final int stride;
    private final int windowUs;
    private final int support;
    private final PixelTimes stamps;
    private final StageCounters counters = new StageCounters();

    /**
     * @param width sensor width
     * @param height sensor height
     * @param windowUs correlation window dT in microseconds, 1 .. 1 000 000
     * @param support neighbours required, 1 .. 8 (1: background-activity filter; more: k-of-8
     *     correlation filter)
     */
    public BackgroundActivityFilter(int width, int height, int windowUs, int support) {
        if (windowUs < 1 || windowUs > 1_000_000) {
            throw new IllegalArgumentException(stageName(support) + ".window=" + windowUs + "us outside [1us, 1s]");
        }
        if (support < 1 || support > 8) {
            throw new IllegalArgumentException(stageName(support) + ".support=" + support + " outside [1, 8]");
        }
        this.stride = width + 2;
        this.windowUs = windowUs;
        this.support = support;
        this.stamps = new PixelTimes((width + 2) * (height + 2));
    }

    private static String stageName(int support) {
        return support == 1 ? "background-activity" : "correlation";
    }

    @Override
    public String name() {
        return stageName(support);
    }

    @Override
    public void process(EventBatch batch) {
        int base = stamps.base(batch);
        int[] s = stamps.stamps;
        int[] xs = batch.x;
        int[] ys = batch.y;
        int[] ts = batch.t;
        int n = batch.size;
        int st = stride;
        int dt = windowUs;
        int k = support;
        int kept = 0;
        for (int i = 0; i < n; i++) {
            int c = (ys[i] + 1) * st + xs[i] + 1;
            int now = base + ts[i];
            int up = c - st;
            int down = c + st;
            int found = (now - s[up - 1] <= dt ? 1 : 0)
                    + (now - s[up] <= dt ? 1 : 0)
                    + (now - s[up + 1] <= dt ? 1 : 0)
                    + (now - s[c - 1] <= dt ? 1 : 0)
                    + (now - s[c + 1] <= dt ? 1 : 0)
                    + (now - s[down - 1] <= dt ? 1 : 0)
                    + (now - s[down] <= dt ? 1 : 0)
                    + (now - s[down + 1] <= dt ? 1 : 0);
            s[c] = now;
            if (found >= k) {
                if (kept != i) {
                    batch.move(i, kept);
                }
                kept++;
            }
        }
        batch.size = kept;
        counters.record(n, kept);
    }

    @Override
    public StageCounters counters() {
        return counters;
    }

    @Override
    public String describe() {
        return support == 1
                ? "background-activity(window=" + windowUs + "us)"
                : "correlation(window=" + windowUs + "us, support=" + support + ")";
    }
}
