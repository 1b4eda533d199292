package dev.afterglow.node.pipeline;

import dev.afterglow.node.config.ConfigException;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.SensorHello;
import io.netty.channel.Channel;
import io.netty.channel.EventLoopGroup;
import java.util.Collection;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;

/**
 * The node's sensors: listed sensors get their pipeline at start; an unlisted sensor gets one at
 * its first hello if the configuration accepts unlisted sensors. A sensor keeps its pipeline (and
 * reconstruction state) across reconnects; a new TCP connection for a sensor takes over from an
 * old one, which is closed. Thread-safe.
 */
public final class SensorRegistry {
    /** Outcome of a hello: the sensor's pipeline, or an error code and message for the peer. */
    public record Attach(SensorPipeline pipeline, String errorCode, String message) {
        static Attach error(String code, String message) {
            return new Attach(null, code, message);
        }
    }

    private final NodeConfig config;
    private final EventLoopGroup pipelineGroup;
    private final FramePublisher publisher;
    private final NodeClock clock;
    private final Counters nodeCounters;
    private final Map<String, SensorPipeline> sensors = new ConcurrentHashMap<>();
    private final Map<String, Counters> sensorCounters = new ConcurrentHashMap<>();
    private final Map<String, Channel> activeTcp = new ConcurrentHashMap<>();

    public SensorRegistry(NodeConfig config, EventLoopGroup pipelineGroup, FramePublisher publisher, NodeClock clock,
            Counters nodeCounters) {
        this.config = config;
        this.pipelineGroup = pipelineGroup;
        this.publisher = publisher;
        this.clock = clock;
        this.nodeCounters = nodeCounters;
        for (SensorConfig s : config.sensors) {
            create(s);
        }
    }

    private SensorPipeline create(SensorConfig s) {
        Counters c = sensorCounters.computeIfAbsent(s.id, k -> new Counters());
        SensorPipeline p = new SensorPipeline(s, pipelineGroup.next(), publisher, clock, c,
                config.limits.maxPendingPackets, config.limits.maxPendingBytes, config.limits.maxEventsPerPacket);
        sensors.put(s.id, p);
        return p;
    }

    /** Binds a TCP connection that sent {@code hello} to its sensor. */
    public synchronized Attach attach(SensorHello hello, Channel channel) {
        String id = hello.getSensorId();
        if (id.isBlank()) {
            nodeCounters.increment(NodeCounter.UNKNOWN_SENSOR);
            return Attach.error("bad-hello", "hello without sensor_id");
        }
        SensorPipeline p = sensors.get(id);
        if (p == null) {
            if (!config.acceptUnlistedSensors) {
                nodeCounters.increment(NodeCounter.UNKNOWN_SENSOR);
                return Attach.error("unknown-sensor", "sensor " + id + " is not listed and accept-unlisted-sensors is false");
            }
            try {
                SensorConfig s = config.sensorDefaults.forSensor(id, hello.getWidth(), hello.getHeight());
                if (s.width < 1 || s.width > 32768 || s.height < 1 || s.height > 32768) {
                    throw new ConfigException("geometry " + s.width + "x" + s.height + " outside 1x1 .. 32768x32768");
                }
                p = create(s);
            } catch (IllegalArgumentException e) {
                nodeCounters.increment(NodeCounter.GEOMETRY_MISMATCH);
                return Attach.error("bad-geometry", e.getMessage());
            }
        } else if (p.width() != hello.getWidth() || p.height() != hello.getHeight()) {
            nodeCounters.increment(NodeCounter.GEOMETRY_MISMATCH);
            return Attach.error("geometry-mismatch", "sensor " + id + " is " + p.width() + "x" + p.height()
                    + ", hello says " + hello.getWidth() + "x" + hello.getHeight());
        }
        Channel old = activeTcp.put(id, channel);
        if (old != null && old != channel) {
            old.close();
        }
        p.setConnected(true);
        return new Attach(p, null, null);
    }

    /** Unbinds a closed TCP connection. */
    public void detach(String sensorId, Channel channel) {
        if (activeTcp.remove(sensorId, channel)) {
            SensorPipeline p = sensors.get(sensorId);
            if (p != null) {
                p.setConnected(false);
            }
        }
    }

    /** The sensor's pipeline, or null. */
    public SensorPipeline get(String sensorId) {
        return sensors.get(sensorId);
    }

    /** All sensors. */
    public Collection<SensorPipeline> all() {
        return sensors.values();
    }

    /** Node-wide counters. */
    public Counters nodeCounters() {
        return nodeCounters;
    }

    /** Stops every sensor's timers. */
    public void close() {
        for (SensorPipeline p : sensors.values()) {
            p.close();
        }
    }
}
