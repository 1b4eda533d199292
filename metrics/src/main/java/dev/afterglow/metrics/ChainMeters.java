package dev.afterglow.metrics;

import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.StageCounters;
import dev.afterglow.filters.chain.Chain;
import io.micrometer.core.instrument.FunctionCounter;
import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import java.util.ArrayList;
import java.util.List;

/**
 * Exposes the per-stage event counters of a {@link Chain} as Micrometer function counters, read
 * from the chain's single-writer {@link StageCounters} when the registry is scraped: nothing is
 * recorded on the hot path. In Prometheus text these appear as
 * {@code afterglow_stage_input_events_total} and {@code afterglow_stage_output_events_total} with tags
 * {@code sensor}, {@code stage} (the method's name) and {@code position} (0-based place in the
 * chain, so a chain may use one method twice).
 *
 * <p>With {@link StageTimers}, each stage's processing time per packet is exported too, as
 * {@code afterglow_stage_time_seconds{quantile}} (see {@link LatencyRecorder}) with the same tags.
 *
 * <p>Close the returned handle to remove the meters when the sensor's chain is replaced.
 */
public final class ChainMeters implements AutoCloseable {
    /** Meter name of events entering a stage. */
    public static final String EVENTS_IN = "afterglow.stage.input";
    /** Meter name of events leaving a stage. */
    public static final String EVENTS_OUT = "afterglow.stage.output";

    private final MeterRegistry registry;
    private final List<Meter> meters;
    private final StageTimers timers;

    private ChainMeters(MeterRegistry registry, List<Meter> meters, StageTimers timers) {
        this.registry = registry;
        this.meters = meters;
        this.timers = timers;
    }

    /** Registers counters for every stage of {@code chain} under the tag {@code sensor=sensorId}. */
    public static ChainMeters bind(MeterRegistry registry, String sensorId, Chain chain) {
        return bind(registry, sensorId, chain, null);
    }

    /** As {@link #bind(MeterRegistry, String, Chain)}, plus the stage times of {@code timers} (may be null). */
    public static ChainMeters bind(MeterRegistry registry, String sensorId, Chain chain, StageTimers timers) {
        if (timers != null && timers.chain() != chain) {
            throw new IllegalArgumentException("stage timers belong to another chain");
        }
        List<Meter> meters = new ArrayList<>();
        List<EventStage> stages = chain.stages();
        for (int i = 0; i < stages.size(); i++) {
            EventStage stage = stages.get(i);
            StageCounters c = stage.counters();
            String position = Integer.toString(i);
            meters.add(FunctionCounter.builder(EVENTS_IN, c, StageCounters::eventsIn)
                    .description("Events that entered a chain stage")
                    .baseUnit("events")
                    .tags("sensor", sensorId, "stage", stage.name(), "position", position)
                    .register(registry));
            meters.add(FunctionCounter.builder(EVENTS_OUT, c, StageCounters::eventsOut)
                    .description("Events that left a chain stage (applied, for the reconstruction)")
                    .baseUnit("events")
                    .tags("sensor", sensorId, "stage", stage.name(), "position", position)
                    .register(registry));
            if (timers != null) {
                timers.stage(i).bind(registry, StageTimers.NAME, "Time a chain stage spent on one packet",
                        Tags.of("sensor", sensorId, "stage", stage.name(), "position", position));
            }
        }
        return new ChainMeters(registry, meters, timers);
    }

    /** Removes the meters from the registry. */
    @Override
    public void close() {
        for (Meter m : meters) {
            registry.remove(m);
        }
        if (timers != null) {
            for (int i = 0; i < timers.chain().stages().size(); i++) {
                timers.stage(i).close();
            }
        }
    }
}
