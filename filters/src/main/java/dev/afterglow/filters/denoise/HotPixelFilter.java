package dev.afterglow.filters.denoise;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.StageCounters;
import java.util.Arrays;

/**
 * Hot-pixel filter: learns each pixel's event rate over a window of sensor time, then masks the
 * pixels whose rate is far above the rest and drops their events.
 *
 * <p>A pixel is hot when its count over the learning window exceeds both {@code factor} times the
 * mean count per pixel and {@code minRateHz} times the window length (common practice: hot pixels
 * fire orders of magnitude faster than the scene makes ordinary pixels fire). Learning starts at
 * the first event after construction or after {@link #requestRelearn()}; while it runs, events pass
 * under the previous mask (none at first), and the new mask replaces the old one when the window
 * ends.
 *
 * <p>Threading: single owner thread; {@link #requestRelearn()} may be called from any thread and
 * takes effect at the next batch. {@link #maskedPixels()} and {@link #learning()} may be read
 * from any thread.
 */
public final class HotPixelFilter implements EventStage {
    private final int width;
    private final int pixels;
    private final long learnUs;
    private final double factor;
    private final double minRateHz;
    private final int[] counts;
    private final boolean[] mask;
    private final StageCounters counters = new StageCounters();

    private volatile boolean relearnRequested = true;
    private volatile boolean learning;
    private volatile int maskedPixels;
    private boolean windowOpen;
    private long learnEndUs;

    /**
     * @param width sensor width
     * @param height sensor height
     * @param learnUs learning window in microseconds, 1 ms .. 600 s
     * @param factor how many times the mean rate a hot pixel exceeds, 2 .. 1e6
     * @param minRateHz a hot pixel's rate is also at least this, 0 .. 1e6
     */
    public HotPixelFilter(int width, int height, long learnUs, double factor, double minRateHz) {
        if (learnUs < 1_000 || learnUs > 600_000_000L) {
            throw new IllegalArgumentException("hot-pixel.learn=" + learnUs + "us outside [1ms, 600s]");
        }
        if (!(factor >= 2 && factor <= 1e6)) {
            throw new IllegalArgumentException("hot-pixel.factor=" + factor + " outside [2, 1e6]");
        }
        if (!(minRateHz >= 0 && minRateHz <= 1e6)) {
            throw new IllegalArgumentException("hot-pixel.min-rate=" + minRateHz + "Hz outside [0Hz, 1e6Hz]");
        }
        this.width = width;
        this.pixels = width * height;
        this.learnUs = learnUs;
        this.factor = factor;
        this.minRateHz = minRateHz;
        this.counts = new int[pixels];
        this.mask = new boolean[pixels];
    }

    @Override
    public String name() {
        return "hot-pixel";
    }

    /** Starts a new learning window at the next event; the current mask stays until it ends. */
    public void requestRelearn() {
        relearnRequested = true;
    }

    /** True while a learning window is open or requested. */
    public boolean learning() {
        return learning || relearnRequested;
    }

    /** Number of pixels in the current mask. */
    public int maskedPixels() {
        return maskedPixels;
    }

    /** True if pixel (x, y) is masked. Owner thread only. */
    public boolean isMasked(int x, int y) {
        return mask[y * width + x];
    }

    @Override
    public void process(EventBatch batch) {
        if (relearnRequested) {
            relearnRequested = false;
            Arrays.fill(counts, 0);
            learning = true;
            windowOpen = false;
        }
        int n = batch.size;
        int[] xs = batch.x;
        int[] ys = batch.y;
        int[] ts = batch.t;
        boolean[] m = mask;
        int w = width;
        int kept = 0;
        int i = 0;
        if (learning) {
            for (; i < n; i++) {
                long now = batch.timeBaseUs + ts[i];
                if (!windowOpen) {
                    windowOpen = true;
                    learnEndUs = now + learnUs;
                }
                if (now >= learnEndUs) {
                    finishLearning();
                    break;
                }
                int idx = ys[i] * w + xs[i];
                counts[idx]++;
                if (!m[idx]) {
                    if (kept != i) {
                        batch.move(i, kept);
                    }
                    kept++;
                }
            }
        }
        for (; i < n; i++) {
            if (!m[ys[i] * w + xs[i]]) {
                if (kept != i) {
                    batch.move(i, kept);
                }
                kept++;
            }
        }
        batch.size = kept;
        counters.record(n, kept);
    }

    private void finishLearning() {
        long total = 0;
        for (int c : counts) {
            total += c;
        }
        double mean = (double) total / pixels;
        double threshold = Math.max(factor * mean, minRateHz * learnUs * 1e-6);
        int masked = 0;
        for (int i = 0; i < pixels; i++) {
            boolean hot = counts[i] > threshold;
            mask[i] = hot;
            if (hot) {
                masked++;
            }
        }
        maskedPixels = masked;
        learning = false;
    }

    @Override
    public StageCounters counters() {
        return counters;
    }

    @Override
    public String describe() {
        return "hot-pixel(learn=" + learnUs + "us, factor=" + factor + ", min-rate=" + minRateHz + "Hz)";
    }
}
