package dev.afterglow.filters.recon;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.StageCounters;

/**
 * Direct integration: {@code L += p·C} per event, the baseline every other method is compared
 * with. Nothing decays, so noise events accumulate without bound.
 *
 * <p>Keeps the net event count per pixel as an {@code int}, so the state is exact however long it
 * runs. Threading: single owner thread.
 */
public final class DirectIntegration implements Reconstruction {
    private final int width;
    private final int height;
    private final float contrast;
    private final int[] net;
    private final StageCounters counters = new StageCounters();

    /**
     * @param contrast contrast threshold C in log units, 0.01 .. 2
     */
    public DirectIntegration(int width, int height, double contrast) {
        ReconstructionChecks.contrast("direct-integration", contrast);
        this.width = width;
        this.height = height;
        this.contrast = (float) contrast;
        this.net = new int[width * height];
    }

    @Override
    public String name() {
        return "direct-integration";
    }

    @Override
    public void process(EventBatch batch) {
        int n = batch.size;
        int[] xs = batch.x;
        int[] ys = batch.y;
        byte[] ps = batch.p;
        int w = width;
        for (int i = 0; i < n; i++) {
            net[ys[i] * w + xs[i]] += ps[i];
        }
        counters.record(n, n);
    }

    @Override
    public void readLog(long timeUs, float[] out) {
        float c = contrast;
        for (int i = 0; i < net.length; i++) {
            out[i] = net[i] * c;
        }
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
        return "direct-integration(contrast=" + contrast + ")";
    }
}
