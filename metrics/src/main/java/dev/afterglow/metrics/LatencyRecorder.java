package dev.afterglow.metrics;

import io.micrometer.core.instrument.FunctionCounter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import java.util.ArrayList;
import java.util.List;
import org.HdrHistogram.Histogram;
import org.HdrHistogram.IntervalHistogramProvider;
import org.HdrHistogram.Recorder;
import org.HdrHistogram.SingleWriterRecorder;
import org.HdrHistogram.ValueRecorder;

/**
 * A latency histogram for one hot thread: {@link #recordNanos} is called by a single writer
 * without locks or allocation (an HdrHistogram {@link SingleWriterRecorder} with a fixed range);
 * any other thread harvests interval histograms when the registry is read. Where values come from
 * several threads (e.g. socket-write completions on I/O threads), {@link #forConcurrentWriters()}
 * uses HdrHistogram's wait-free multi-writer {@link Recorder} instead.
 *
 * <p>Values are tracked from 1 ns to {@link #HIGHEST_NANOS} with {@link #SIGNIFICANT_DIGITS}
 * significant decimal digits; larger values are recorded as the highest. Exported percentiles
 * cover a sliding window of the last {@code windowSlots} slots of {@code slotNanos} each (slots
 * advance lazily on harvest), so a dashboard sees recent behaviour; the sample count is all-time.
 * A harvest costs two histogram additions (the window is kept as a running sum: the new interval
 * is added, an expired slot subtracted), and meter reads within {@link #HARVEST_EVERY_NANOS} of
 * the last harvest reuse it, so one scrape of all six meters harvests once.
 *
 * <p>Meters, for a dotted base name {@code N} (Prometheus names in seconds):
 * gauge {@code N} tagged {@code quantile} = 0.5, 0.9, 0.99, 0.999 ({@code N_seconds}), gauge
 * {@code N.max} ({@code N_max_seconds}) and counter {@code N.samples} ({@code N_samples_total}).
 */
public final class LatencyRecorder implements AutoCloseable {
    /** Highest trackable value: 60 s in nanoseconds. */
    public static final long HIGHEST_NANOS = 60_000_000_000L;
    /** Significant decimal digits kept by the histograms. */
    // 2 digits (1%): a histogram is 30 KB instead of 221 KB with 3, and a recorder holds ten of them.
    public static final int SIGNIFICANT_DIGITS = 2;
    /** Reads closer together than this share one harvest. */
    public static final long HARVEST_EVERY_NANOS = 100_000_000;
    /** Exported quantiles. */
    public static final double[] QUANTILES = {0.5, 0.9, 0.99, 0.999};

    private final ValueRecorder recorder;
    private final IntervalHistogramProvider<Histogram> intervals;
    private final long slotNanos;
    private final Histogram[] slots;
    private final Histogram window = new Histogram(1, HIGHEST_NANOS, SIGNIFICANT_DIGITS);
    private Histogram interval;
    private int slot;
    private long slotStartNanos = System.nanoTime();
    private long lastHarvestNanos = System.nanoTime() - HARVEST_EVERY_NANOS;
    private long totalCount;
    private final List<Meter> meters = new ArrayList<>();
    private MeterRegistry registry;

    /** A recorder whose percentiles cover the last {@code windowSlots × slotNanos}. */
    public LatencyRecorder(int windowSlots, long slotNanos) {
        this(windowSlots, slotNanos, false);
    }

    /** A recorder over the last minute (six 10 s slots). */
    public LatencyRecorder() {
        this(6, 10_000_000_000L);
    }

    /** A recorder over the last minute that any number of threads may write at once. */
    public static LatencyRecorder forConcurrentWriters() {
        return new LatencyRecorder(6, 10_000_000_000L, true);
    }

    private LatencyRecorder(int windowSlots, long slotNanos, boolean concurrentWriters) {
        if (concurrentWriters) {
            Recorder r = new Recorder(1, HIGHEST_NANOS, SIGNIFICANT_DIGITS);
            this.recorder = r;
            this.intervals = r;
        } else {
            SingleWriterRecorder r = new SingleWriterRecorder(1, HIGHEST_NANOS, SIGNIFICANT_DIGITS);
            this.recorder = r;
            this.intervals = r;
        }
        if (windowSlots < 1 || slotNanos < 1) {
            throw new IllegalArgumentException("windowSlots and slotNanos must be positive");
        }
        this.slotNanos = slotNanos;
        this.slots = new Histogram[windowSlots];
        for (int i = 0; i < windowSlots; i++) {
            slots[i] = new Histogram(1, HIGHEST_NANOS, SIGNIFICANT_DIGITS);
        }
    }

    /** Records one latency; only ever from the one writer thread (unless made for concurrent writers). Negative values count as 0 ns. */
    public void recordNanos(long nanos) {
        recorder.recordValue(Math.max(1, Math.min(HIGHEST_NANOS, nanos)));
    }

    /** Moves what was recorded since the last harvest into the window. Any thread but the writer. */
    public synchronized void harvest() {
        long now = System.nanoTime();
        lastHarvestNanos = now;
        interval = intervals.getIntervalHistogram(interval);
        if (now - slotStartNanos >= slotNanos) {
            long steps = Math.min(slots.length, (now - slotStartNanos) / slotNanos);
            for (long i = 0; i < steps; i++) {
                slot = (slot + 1) % slots.length;
                if (slots[slot].getTotalCount() > 0) {
                    window.subtract(slots[slot]);
                    slots[slot].reset();
                }
            }
            slotStartNanos += ((now - slotStartNanos) / slotNanos) * slotNanos;
        }
        if (interval.getTotalCount() > 0) {
            slots[slot].add(interval);
            window.add(interval);
            totalCount += interval.getTotalCount();
        }
    }

    // What the meters read: one harvest serves every meter read within HARVEST_EVERY_NANOS.
    private void harvestIfStale() {
        if (System.nanoTime() - lastHarvestNanos >= HARVEST_EVERY_NANOS) {
            harvest();
        }
    }

    private synchronized double meterQuantileSeconds(double q) {
        harvestIfStale();
        return quantile(q) / 1e9;
    }

    private synchronized double meterMaxSeconds() {
        harvestIfStale();
        return max() / 1e9;
    }

    private synchronized long meterCount() {
        harvestIfStale();
        return totalCount;
    }

    /** Value (ns) at quantile {@code q} in [0, 1] of the window, after a harvest; 0 if empty. */
    public synchronized long valueAtQuantileNanos(double q) {
        harvest();
        return quantile(q);
    }

    private long quantile(double q) {
        return window.getTotalCount() == 0 ? 0 : window.getValueAtPercentile(q * 100);
    }

    /** Largest value (ns) in the window, after a harvest; 0 if empty. */
    public synchronized long maxNanos() {
        harvest();
        return max();
    }

    private long max() {
        return window.getTotalCount() == 0 ? 0 : window.getMaxValue();
    }

    /** Values recorded since start, after a harvest. */
    public synchronized long count() {
        harvest();
        return totalCount;
    }

    /**
     * Registers this recorder's meters as {@code name} with {@code tags}; call once. The gauges
     * read (and harvest) on scrape.
     */
    public synchronized LatencyRecorder bind(MeterRegistry registry, String name, String help, Tags tags) {
        if (this.registry != null) {
            throw new IllegalStateException("already bound");
        }
        this.registry = registry;
        for (double q : QUANTILES) {
            meters.add(Gauge.builder(name, this, r -> r.meterQuantileSeconds(q))
                    .description(help)
                    .baseUnit("seconds")
                    .tags(tags.and("quantile", Double.toString(q)))
                    .register(registry));
        }
        meters.add(Gauge.builder(name + ".max", this, LatencyRecorder::meterMaxSeconds)
                .description(help + " (largest in the window)")
                .baseUnit("seconds")
                .tags(tags)
                .register(registry));
        meters.add(FunctionCounter.builder(name + ".samples", this, LatencyRecorder::meterCount)
                .description(help + " (values recorded)")
                .tags(tags)
                .register(registry));
        return this;
    }

    /** Removes the meters, if bound. */
    @Override
    public synchronized void close() {
        if (registry != null) {
            for (Meter m : meters) {
                registry.remove(m);
            }
            meters.clear();
            registry = null;
        }
    }
}
