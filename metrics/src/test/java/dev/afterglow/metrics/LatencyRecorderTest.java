package dev.afterglow.metrics;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.Tags;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class LatencyRecorderTest {
    /** Relative precision HdrHistogram states for the recorder's significant digits (HdrHistogram documentation). */
    private static final double PRECISION = Math.pow(10, -LatencyRecorder.SIGNIFICANT_DIGITS);

    /** Nearest-rank percentile of sorted values: the smallest value with at least q·n values at or below it. */
    private static long exactQuantile(long[] sorted, double q) {
        int rank = (int) Math.max(1, Math.ceil(q * sorted.length));
        return sorted[rank - 1];
    }

    @Test
    void shouldExportPercentilesOfUniformLatenciesWithinStatedPrecision() {
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        LatencyRecorder recorder = new LatencyRecorder().bind(registry, "afterglow.test.latency", "test", Tags.of("sensor", "a"));
        SplittableRandom random = new SplittableRandom(42);
        long[] values = new long[200_000];
        for (int i = 0; i < values.length; i++) {
            values[i] = random.nextLong(1_000, 20_000_000); // 1 us .. 20 ms, uniform
            recorder.recordNanos(values[i]);
        }
        long[] sorted = values.clone();
        Arrays.sort(sorted);
        for (double q : LatencyRecorder.QUANTILES) {
            double exported = registry.get("afterglow.test.latency").tag("quantile", Double.toString(q)).gauge().value();
            long exact = exactQuantile(sorted, q);
            // HdrHistogram documentation: a histogram with d significant digits keeps values to a
            // resolution of 1 part in 10^d of the value (equivalent-value ranges at most that wide).
            double tolerance = exact * Math.pow(10, -LatencyRecorder.SIGNIFICANT_DIGITS) + 1;
            assertEquals(exact / 1e9, exported, tolerance / 1e9, "quantile " + q);
        }
        double max = registry.get("afterglow.test.latency.max").gauge().value();
        long exactMax = sorted[sorted.length - 1];
        assertEquals(exactMax / 1e9, max, (exactMax * PRECISION + 1) / 1e9);
        assertEquals(values.length, registry.get("afterglow.test.latency.samples").functionCounter().count());

        String text = registry.scrape();
        assertTrue(text.contains("afterglow_test_latency_seconds{quantile=\"0.99\",sensor=\"a\"}"), text);
        assertTrue(text.contains("afterglow_test_latency_max_seconds{sensor=\"a\"}"), text);
        assertTrue(text.contains("afterglow_test_latency_samples_total{sensor=\"a\"} 200000"), text);
    }

    @Test
    void shouldMatchExactPercentilesOfFixedSetAcrossSeveralHarvests() {
        LatencyRecorder recorder = new LatencyRecorder();
        // 1..1000 us, each once, recorded in three parts with harvests in between.
        long[] values = new long[1000];
        for (int i = 0; i < values.length; i++) {
            values[i] = (i + 1) * 1_000L;
            recorder.recordNanos(values[i]);
            if (i == 300 || i == 700) {
                recorder.harvest();
            }
        }
        for (double q : new double[] {0.5, 0.9, 0.99, 0.999}) {
            long exact = exactQuantile(values, q);
            long got = recorder.valueAtQuantileNanos(q);
            // Source: HdrHistogram documentation (d significant digits: within 10^-d of the value).
            assertEquals(exact, got, exact * PRECISION + 1, "quantile " + q);
        }
        assertEquals(1000, recorder.count());
        assertEquals(1_000_000, recorder.maxNanos(), 1_000_000 * PRECISION);
    }

    @Test
    void shouldClampOutOfRangeValuesInsteadOfFailing() {
        LatencyRecorder recorder = new LatencyRecorder();
        recorder.recordNanos(-5);
        recorder.recordNanos(LatencyRecorder.HIGHEST_NANOS * 10);
        assertEquals(2, recorder.count());
        assertEquals(1, recorder.valueAtQuantileNanos(0.5));
        assertTrue(recorder.maxNanos() >= LatencyRecorder.HIGHEST_NANOS * (1 - PRECISION));
    }

    @Test
    void concurrentRecorderShouldKeepEveryValueFromSeveralWriters() throws InterruptedException {
        LatencyRecorder recorder = LatencyRecorder.forConcurrentWriters();
        int threads = 4;
        int perThread = 50_000;
        Thread[] writers = new Thread[threads];
        for (int t = 0; t < threads; t++) {
            long value = 1_000_000L * (t + 1); // writer t records (t+1) ms
            writers[t] = new Thread(() -> {
                for (int i = 0; i < perThread; i++) {
                    recorder.recordNanos(value);
                }
            });
            writers[t].start();
        }
        for (Thread w : writers) {
            w.join();
        }
        // Every value counted once; quartiles fall on each writer's value within HdrHistogram's precision.
        assertEquals((long) threads * perThread, recorder.count());
        assertEquals(1_000_000, recorder.valueAtQuantileNanos(0.25), 1_000_000 * PRECISION);
        assertEquals(4_000_000, recorder.maxNanos(), 4_000_000 * PRECISION);
    }

    @Test
    void slidingWindowShouldDropSlotsOlderThanTheWindowAndKeepRecentOnes() throws InterruptedException {
        LatencyRecorder recorder = new LatencyRecorder(3, 40_000_000L); // window: 3 slots of 40 ms
        recorder.recordNanos(50_000_000); // 50 ms
        recorder.harvest();
        assertEquals(50_000_000, recorder.maxNanos(), 50_000_000 * PRECISION);
        Thread.sleep(50); // at least one slot later: the 50 ms value is still inside the window
        recorder.recordNanos(2_000_000);
        assertEquals(50_000_000, recorder.maxNanos(), 50_000_000 * PRECISION);
        Thread.sleep(200); // more than the whole window later: both values have left it
        recorder.recordNanos(1_000_000);
        assertEquals(1_000_000, recorder.maxNanos(), 1_000_000 * PRECISION);
        assertEquals(1_000_000, recorder.valueAtQuantileNanos(0.5), 1_000_000 * PRECISION);
        assertEquals(3, recorder.count()); // the count is all-time
    }
}
