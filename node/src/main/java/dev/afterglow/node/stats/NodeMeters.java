package dev.afterglow.node.stats;

import dev.afterglow.metrics.ChainMeters;
import dev.afterglow.metrics.StageTimers;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.fleet.Fleet;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.publish.FramePublisher;
import io.micrometer.core.instrument.FunctionCounter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * Binds the node's state to a Micrometer registry: every {@link NodeCounter} as a function counter
 * (tag {@code sensor} for sensor-scoped ones), each chain's stage counters through
 * {@link ChainMeters} (with their per-packet stage times), gauges for subscribers, pending packets and processing lag, and each
 * sensor's latency recorders. Nothing is recorded here: meters read the lock-free counters when
 * scraped. Sensors appear at run time and chains are replaced, so call {@link #refresh()} before
 * each scrape.
 */
public final class NodeMeters {
    /** Latency of a frame's sensor time (mapped to host time) to publishing. */
    public static final String SENSOR_TO_PUBLISH = "afterglow.latency.sensor.to.publish";
    /** Duration of a readout. */
    public static final String READOUT = "afterglow.latency.readout";
    /** Start of a frame's readout to its bytes written to a subscriber's socket. */
    public static final String READOUT_TO_SOCKET = "afterglow.latency.readout.to.socket";
    /** Host arrival of a packet to its events applied. */
    public static final String ARRIVAL_TO_APPLIED = "afterglow.latency.arrival.to.applied";
    /** Duration of a learned reconstruction's model inference (part of a readout). */
    public static final String INFERENCE = "afterglow.latency.inference";

    private final MeterRegistry registry;
    private final SensorRegistry sensors;
    private final Map<String, Bound> bound = new HashMap<>();

    private static final class Bound {
        SensorPipeline pipeline;
        StageTimers timers;
        ChainMeters chainMeters;
    }

    public NodeMeters(MeterRegistry registry, SensorRegistry sensors, FramePublisher publisher, Counters nodeCounters) {
        this(registry, sensors, publisher, nodeCounters, null);
    }

    /** @param fleet the node's part in a fleet (partitions owned and consumer lag), or null */
    public NodeMeters(MeterRegistry registry, SensorRegistry sensors, FramePublisher publisher, Counters nodeCounters,
            Fleet fleet) {
        this.registry = registry;
        this.sensors = sensors;
        for (NodeCounter c : NodeCounter.values()) {
            if (c.scope() == NodeCounter.Scope.NODE) {
                FunctionCounter.builder(c.meterName(), nodeCounters, v -> v.get(c))
                        .description(c.help())
                        .register(registry);
            }
        }
        Gauge.builder("afterglow.subscribers.connected", publisher, FramePublisher::count)
                .description("Subscriber connections with an accepted subscription")
                .register(registry);
        if (fleet != null && fleet.consumes()) {
            Gauge.builder("afterglow.kafka.partitions.owned", fleet,
                            f -> f.source() == null ? 0 : f.source().partitionsOwned())
                    .description("Partitions of the event topic this node owns in its processing group")
                    .register(registry);
            Gauge.builder("afterglow.kafka.consumer.lag", fleet, f -> f.source() == null ? 0 : f.source().lagRecords())
                    .description("Event-topic records in this node's partitions not yet read (consumer lag)")
                    .baseUnit("records")
                    .register(registry);
        }
        refresh();
    }

    /**
     * Registers meters for sensors that appeared, removes those of sensors that were forgotten
     * (idle eviction) and rebinds stage counters of replaced chains.
     */
    public synchronized void refresh() {
        for (var it = bound.entrySet().iterator(); it.hasNext();) {
            var e = it.next();
            if (sensors.get(e.getKey()) != e.getValue().pipeline) {
                unbind(e.getKey());
                it.remove();
            }
        }
        for (SensorPipeline p : sensors.all()) {
            Bound b = bound.get(p.id());
            if (b == null) {
                b = new Bound();
                b.pipeline = p;
                bind(p);
                bound.put(p.id(), b);
            }
            StageTimers timers = p.stageTimers();
            if (b.timers != timers) {
                if (b.chainMeters != null) {
                    b.chainMeters.close();
                }
                b.timers = timers;
                b.chainMeters = ChainMeters.bind(registry, p.id(), timers.chain(), timers);
            }
        }
    }

    /** Removes every meter tagged with this sensor. */
    private void unbind(String sensorId) {
        for (io.micrometer.core.instrument.Meter m : List.copyOf(registry.getMeters())) {
            if (sensorId.equals(m.getId().getTag("sensor"))) {
                registry.remove(m);
            }
        }
    }

    private void bind(SensorPipeline p) {
        Tags tags = Tags.of("sensor", p.id());
        Counters counters = p.counters();
        for (NodeCounter c : NodeCounter.values()) {
            if (c.scope() == NodeCounter.Scope.SENSOR) {
                FunctionCounter.builder(c.meterName(), counters, v -> v.get(c))
                        .description(c.help())
                        .tags(tags)
                        .register(registry);
            }
        }
        Gauge.builder("afterglow.pending.packets", p, SensorPipeline::pendingPackets)
                .description("Packets waiting for the sensor's pipeline thread")
                .tags(tags)
                .register(registry);
        Gauge.builder("afterglow.processing.lag", p, s -> s.lagNanos() / 1e9)
                .description("Arrival-to-applied time of the last packet processed")
                .baseUnit("seconds")
                .tags(tags)
                .register(registry);
        p.sensorToPublishLatency().bind(registry, SENSOR_TO_PUBLISH,
                "Sensor time of a frame (mapped to host time) to the frame handed to subscribers", tags);
        p.readoutLatency().bind(registry, READOUT, "Time spent reading the reconstruction out for a frame", tags);
        p.readoutToSocketLatency().bind(registry, READOUT_TO_SOCKET,
                "Start of a frame's readout to its bytes written to a subscriber's socket", tags);
        p.arrivalToAppliedLatency().bind(registry, ARRIVAL_TO_APPLIED,
                "Host arrival of an event packet to its events applied by the chain", tags);
        p.inferenceLatency().bind(registry, INFERENCE,
                "Time a learned reconstruction spent on one model inference (voxel grid, model, crop), part of the readout", tags);
    }
}
