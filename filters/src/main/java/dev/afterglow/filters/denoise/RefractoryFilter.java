package dev.afterglow.filters.denoise;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.StageCounters;

/**
 * Refractory filter: drops an event that follows the last <em>passed</em> event of the same pixel
 * by less than the refractory period, which thins bursts from one pixel (common practice on event
 * sensors, which have a physical refractory period of their own).
 *
 * <p>State: one {@code int} timestamp per pixel. Threading: single owner thread.
 */
public final class RefractoryFilter implements EventStage {
    private final int width;
    private final int periodUs;
    private final PixelTimes lastPassed;
    private final StageCounters counters = new StageCounters();

    /**
     * @param width sensor width
     * @param height sensor height
     * @param periodUs refractory period in microseconds, 1 .. 1 000 000
     */
    public RefractoryFilter(int width, int height, int periodUs) {
        if (periodUs < 1 || periodUs > 1_000_000) {
            throw new IllegalArgumentException("refractory.period=" + periodUs + "us outside [1us, 1s]");
        }
        this.width = width;
        this.periodUs = periodUs;
        this.lastPassed = new PixelTimes(width * height);
    }

    @Override
    public String name() {
        return "refractory";
    }

    @Override
    public void process(EventBatch batch) {
        int base = lastPassed.base(batch);
        int[] stamps = lastPassed.stamps;
        int[] xs = batch.x;
        int[] ys = batch.y;
        int[] ts = batch.t;
        int n = batch.size;
        int w = width;
        int period = periodUs;
        int kept = 0;
        for (int i = 0; i < n; i++) {
            int idx = ys[i] * w + xs[i];
            int now = base + ts[i];
            if (now - stamps[idx] >= period) {
                stamps[idx] = now;
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
        return "refractory(period=" + periodUs + "us)";
    }
}
