package dev.afterglow.filters.denoise;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.StageCounters;

/**
 * Patch-support filter: passes an event only if the pixels of the (2r+1)x(2r+1) patch centred on
 * it that had an event within the window dT before it add up to at least {@code support}, where a
 * pixel on ring d around the event (d = max(|dx|, |dy|), 1 .. r) weighs r + 1 - d: with r = 2 the 8
 * nearest neighbours count 2 and the 16 pixels of the outer ring 1.
 *
 * <p>This is the k-neighbour spatiotemporal correlation filter of S. Guo and T. Delbruck, "Low
 * cost and latency event camera background activity denoising", IEEE TPAMI (2022), taken from the
 * 3x3 neighbourhood to a 5x5 patch, which gathers support when motion is slow: the edge that made
 * an event has moved on only a fraction of a pixel within a short window, so few of the 8 nearest
 * pixels have fired yet, while more of the same edge lies in the outer ring. Counting support over
 * a larger patch is also the event-density criterion of Feng et al., "Event density based
 * denoising method for dynamic vision sensor", Applied Sciences 10(6), 2020. The weights that fall
 * with the ring are our own choice, measured on our scenes: on the tuning seeds they gave a larger
 * area under the ROC curve than the plain 5x5 count on every scene tried, slow and fast. With
 * r = 1 every weight is 1 and the filter is the k-of-8 correlation filter.
 *
 * <p>Every event (passed or not) stamps its pixel. Each pixel counts once, by its latest event,
 * whatever the polarity (measured on our scenes: requiring the same polarity lowered the area
 * under the ROC curve). State: a timestamp map padded by r pixels on every side, so the patch is read
 * without bounds checks; pixels outside the sensor never fire. Threading: single owner thread.
 */
public final class PatchSupportFilter implements EventStage {
    /** Largest patch radius accepted (7x7 patch). */
    public static final int MAX_RADIUS = 3;

    /** Time constant of the mean event rate the window follows (sensor time). */
    static final long RATE_TIME_CONSTANT_US = 250_000;
    /** Shortest window the rate may shrink dT to. */
    static final int MIN_ADAPTED_WINDOW_US = 1_000;

    private final int windowUs;
    /** Mean events per pixel allowed within the window; 0: the window is fixed. */
    private final double fill;
    private final int pixels;
    private double ratePerPixelUs;
    private long lastBatchEndUs = Long.MIN_VALUE;
    private int adaptedWindowUs;
    private final int support;
    private final int radius;
    private final int[] offsets;
    private final int[] weights;
    private final PixelTimes stamps;
    private final int stride;
    private final StageCounters counters = new StageCounters();

    /**
     * @param width sensor width
     * @param height sensor height
     * @param windowUs window dT in microseconds, 1 .. 1 000 000
     * @param support weight of the patch pixels that must have fired within dT, 1 ..
     *     {@link #maxSupport(int) maxSupport(r)}
     * @param radius patch radius r, 1 .. {@value #MAX_RADIUS} (1: the 3x3 neighbourhood)
     */
    public PatchSupportFilter(int width, int height, int windowUs, int support, int radius) {
        this(width, height, windowUs, support, radius, 0);
    }

    /**
     * @param fill 0: dT is fixed; otherwise dT shrinks (down to {@value #MIN_ADAPTED_WINDOW_US} us)
     *     so that the sensor's mean event rate per pixel times dT stays at most {@code fill}, (0, 10]
     */
    public PatchSupportFilter(int width, int height, int windowUs, int support, int radius, double fill) {
        if (!(fill >= 0 && fill <= 10)) {
            throw new IllegalArgumentException("patch-support.fill=" + fill + " outside [0, 10]");
        }
        if (windowUs < 1 || windowUs > 1_000_000) {
            throw new IllegalArgumentException("patch-support.window=" + windowUs + "us outside [1us, 1s]");
        }
        if (radius < 1 || radius > MAX_RADIUS) {
            throw new IllegalArgumentException("patch-support.radius=" + radius + " outside [1, " + MAX_RADIUS + "]");
        }
        int most = maxSupport(radius);
        if (support < 1 || support > most) {
            throw new IllegalArgumentException("patch-support.support=" + support + " outside [1, " + most
                    + "] (radius " + radius + ")");
        }
        this.windowUs = windowUs;
        this.fill = fill;
        this.pixels = width * height;
        this.adaptedWindowUs = windowUs;
        this.support = support;
        this.radius = radius;
        this.stride = width + 2 * radius;
        this.stamps = new PixelTimes(stride * (height + 2 * radius));
        int others = (2 * radius + 1) * (2 * radius + 1) - 1;
        this.offsets = new int[others];
        this.weights = new int[others];
        // Inner rings first: they weigh most, so the count stops early more often.
        int k = 0;
        for (int ring = 1; ring <= radius; ring++) {
            for (int dy = -ring; dy <= ring; dy++) {
                for (int dx = -ring; dx <= ring; dx++) {
                    if (Math.max(Math.abs(dx), Math.abs(dy)) == ring) {
                        offsets[k] = dy * stride + dx;
                        weights[k] = radius + 1 - ring;
                        k++;
                    }
                }
            }
        }
    }

    /** The weight of the whole patch of radius {@code r}: the largest support that can be met. */
    public static int maxSupport(int r) {
        int sum = 0;
        for (int ring = 1; ring <= r; ring++) {
            sum += 8 * ring * (r + 1 - ring);
        }
        return sum;
    }

    @Override
    public String name() {
        return "patch-support";
    }

    @Override
    public void process(EventBatch batch) {
        int base = stamps.base(batch);
        int[] s = stamps.stamps;
        int[] off = offsets;
        int[] wt = weights;
        int m = off.length;
        int[] xs = batch.x;
        int[] ys = batch.y;
        int[] ts = batch.t;
        int n = batch.size;
        int st = stride;
        int r = radius;
        int dt = fill > 0 ? adapt(batch) : windowUs;
        int k = support;
        int kept = 0;
        for (int i = 0; i < n; i++) {
            int c = (ys[i] + r) * st + xs[i] + r;
            int now = base + ts[i];
            int found = 0;
            // Stop counting once enough support is found: the outcome is the same.
            for (int j = 0; j < m && found < k; j++) {
                if (now - s[c + off[j]] <= dt) {
                    found += wt[j];
                }
            }
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

    /**
     * Follows the sensor's mean event rate per pixel (all events in, an exponential average over
     * {@value #RATE_TIME_CONSTANT_US} us of sensor time) and returns dT = min(window, fill / rate).
     * Uncorrelated events are what a long window lets through: at a mean rate λ per pixel a patch
     * of total weight W collects about W·λ·dT of chance support, so dT shrinks as the stream gets
     * busier (a dark, noisy sensor) and stays long when it is sparse (slow motion in good light).
     */
    private int adapt(EventBatch batch) {
        int n = batch.size;
        if (n == 0) {
            return adaptedWindowUs;
        }
        long end = batch.timeBaseUs + batch.t[n - 1];
        if (end <= lastBatchEndUs) {
            return adaptedWindowUs;
        }
        if (lastBatchEndUs != Long.MIN_VALUE) {
            long span = end - lastBatchEndUs;
            double instant = n / ((double) pixels * span);
            double a = Math.min(1, (double) span / RATE_TIME_CONSTANT_US);
            ratePerPixelUs += a * (instant - ratePerPixelUs);
            double window = ratePerPixelUs > 0 ? fill / ratePerPixelUs : windowUs;
            adaptedWindowUs = (int) Math.min(windowUs, Math.max(MIN_ADAPTED_WINDOW_US, window));
        }
        lastBatchEndUs = end;
        return adaptedWindowUs;
    }

    /** The window dT in use: the configured one, or the one the event rate set (fill &gt; 0). */
    public int windowUs() {
        return adaptedWindowUs;
    }

    @Override
    public StageCounters counters() {
        return counters;
    }

    @Override
    public String describe() {
        return "patch-support(window=" + windowUs + "us, support=" + support + ", radius=" + radius
                + (fill > 0 ? ", fill=" + fill : "") + ")";
    }
}
