package dev.afterglow.metrics;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import org.junit.jupiter.api.Test;

class ChainMetersTest {

    @Test
    void shouldExportStageCountsInPrometheusTextFormat() {
        Chain chain = Chain.build("refractory(period=1ms) | high-pass", 8, 8);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        ChainMeters meters = ChainMeters.bind(registry, "cam0", chain);

        EventBatch batch = new EventBatch(16);
        batch.reset(1_000);
        batch.add(1, 1, 1_000, 1);
        batch.add(1, 1, 1_100, 1); // within the 1 ms refractory period: removed
        batch.add(2, 3, 1_200, -1);
        chain.process(batch);

        String text = registry.scrape();
        // Prometheus exposition format: counters end in _total and carry their labels (prometheus.io, "Exposition formats").
        assertTrue(text.contains("afterglow_stage_input_events_total{position=\"0\",sensor=\"cam0\",stage=\"refractory\"} 3.0"), text);
        assertTrue(text.contains("afterglow_stage_output_events_total{position=\"0\",sensor=\"cam0\",stage=\"refractory\"} 2.0"), text);
        assertTrue(text.contains("afterglow_stage_output_events_total{position=\"1\",sensor=\"cam0\",stage=\"high-pass\"} 2.0"), text);
        assertTrue(text.contains("# TYPE afterglow_stage_input_events_total counter"), text);

        meters.close();
        assertFalse(registry.scrape().contains("afterglow_stage_input_events_total"));
        assertEquals(0, registry.getMeters().size());
    }

    @Test
    void shouldExportEachStagesTimePerPacketAndRemoveItWithTheChain() {
        Chain chain = Chain.build("refractory(period=1ms) | high-pass", 8, 8);
        StageTimers timers = new StageTimers(chain);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        ChainMeters meters = ChainMeters.bind(registry, "cam0", chain, timers);

        EventBatch batch = new EventBatch(16);
        for (int packet = 0; packet < 3; packet++) {
            batch.reset(10_000L * packet);
            batch.add(1, 1, 10_000L * packet, 1);
            batch.add(2, 3, 10_000L * packet + 100, -1);
            chain.process(batch, timers);
        }

        String text = registry.scrape();
        // One sample per stage per packet; names follow the Prometheus base-unit convention (seconds).
        assertTrue(text.contains("afterglow_stage_time_samples_total{position=\"0\",sensor=\"cam0\",stage=\"refractory\"} 3.0"), text);
        assertTrue(text.contains("afterglow_stage_time_samples_total{position=\"1\",sensor=\"cam0\",stage=\"high-pass\"} 3.0"), text);
        assertTrue(text.contains("afterglow_stage_time_seconds{position=\"1\",quantile=\"0.99\",sensor=\"cam0\",stage=\"high-pass\"}"), text);
        assertTrue(timers.stage(0).maxNanos() > 0);

        meters.close();
        assertEquals(0, registry.getMeters().size());
    }

    @Test
    void shouldRefuseTimersOfAnotherChain() {
        Chain chain = Chain.build("high-pass", 8, 8);
        StageTimers other = new StageTimers(Chain.build("high-pass", 8, 8));
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        org.junit.jupiter.api.Assertions.assertThrows(IllegalArgumentException.class,
                () -> ChainMeters.bind(registry, "cam0", chain, other));
    }
}
