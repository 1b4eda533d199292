package dev.afterglow.node.pipeline;

import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpecException;
import dev.afterglow.node.config.AccessConfig;
import dev.afterglow.node.config.ConfigException;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.node.guard.ConnectionGuard;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.proto.v1.SensorHello;
import io.netty.channel.Channel;
import io.netty.channel.EventLoopGroup;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.util.Collection;
import java.util.List;
import java.util.Set;
import dev.afterglow.node.publish.FrameSink;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.regex.Pattern;

/**
 * The node's sensors: listed sensors get their pipeline at start; an unlisted sensor gets one at
 * its first hello if the configuration accepts unlisted sensors, within the limits on sensor count,
 * pixels and memory. A sensor keeps its pipeline (and reconstruction state) across reconnects.
 * A hello for a sensor that is connected is refused, unless the policy is {@code replace} and the
 * newcomer authenticates with the sensor's token, or the old connection has read nothing for the
 * hello timeout (its peer is most likely gone). Unlisted sensors idle for
 * {@code limits.sensor-idle-evict-s} are forgotten ({@link #evictIdle}). Thread-safe.
 */
public final class SensorRegistry {
    /** Sensor ids: what a metrics label and a log line can carry safely. */
    private static final Pattern SENSOR_ID = Pattern.compile("[A-Za-z0-9._:-]{1,64}");
    /** Estimated bytes of state per pixel (reconstruction, denoise maps, readout buffers), rounded up. */
    static final long STATE_BYTES_PER_PIXEL = 48;
    /** Share of the heap that sensor state may take; the rest is for packets, frames and the JVM. */
    private static final double HEAP_SHARE_FOR_SENSORS = 0.6;

    /**
     * Outcome of a hello: the sensor's pipeline and where its messages go (the pipeline itself, or
     * the edge's forwarder in front of it), or an error code and message for the peer.
     */
    public record Attach(SensorPipeline pipeline, SensorInput input, String errorCode, String message) {
        static Attach error(String code, String message) {
            return new Attach(null, null, code, message);
        }
    }

    /** Frame sinks a sensor gets besides its subscribers and live view (e.g. a frame topic). */
    public interface ExtraSinks {
        List<FrameSink> forSensor(String sensorId, Counters sensorCounters);
    }

    /** What stands in front of a sensor's pipeline for messages from TCP and UDP (e.g. an edge's forwarder). */
    public interface InputWrapper {
        SensorInput wrap(SensorPipeline pipeline);
    }

    private final NodeConfig config;
    private final EventLoopGroup pipelineGroup;
    private final FramePublisher publisher;
    private final NodeClock clock;
    private final Counters nodeCounters;
    private final Map<String, SensorPipeline> sensors = new ConcurrentHashMap<>();
    private final Map<String, Counters> sensorCounters = new ConcurrentHashMap<>();
    private final Map<String, Channel> activeTcp = new ConcurrentHashMap<>();
    /** Sensors this node takes from the event topic now (it owns their partitions). */
    private final Set<String> fromBus = ConcurrentHashMap.newKeySet();
    private final Map<String, SensorInput> inputs = new ConcurrentHashMap<>();
    private final long heapBudgetBytes;
    private final ExtraSinks extraSinks;
    private final InputWrapper inputWrapper;

    public SensorRegistry(NodeConfig config, EventLoopGroup pipelineGroup, FramePublisher publisher, NodeClock clock,
            Counters nodeCounters) {
        this(config, pipelineGroup, publisher, clock, nodeCounters, (id, c) -> List.of(), p -> p);
    }

    /**
     * @param extraSinks frame sinks each sensor gets besides subscribers and live view
     * @param inputWrapper what stands in front of each pipeline for TCP and UDP messages
     */
    public SensorRegistry(NodeConfig config, EventLoopGroup pipelineGroup, FramePublisher publisher, NodeClock clock,
            Counters nodeCounters, ExtraSinks extraSinks, InputWrapper inputWrapper) {
        this.extraSinks = extraSinks;
        this.inputWrapper = inputWrapper;
        this.config = config;
        this.pipelineGroup = pipelineGroup;
        this.publisher = publisher;
        this.clock = clock;
        this.nodeCounters = nodeCounters;
        this.heapBudgetBytes = (long) (Runtime.getRuntime().maxMemory() * HEAP_SHARE_FOR_SENSORS);
        try {
            if (config.acceptUnlistedSensors) {
                checkDefaultChain(config.sensorDefaults);
            }
            for (SensorConfig s : config.sensors) {
                create(s);
            }
        } catch (RuntimeException e) {
            close();
            throw e;
        }
    }

    /**
     * Builds the chain unlisted sensors get once, at a small size, so that what can only be found
     * by building it (a learned reconstruction's model file: missing, unreadable, not following
     * the contract) is a start-up error rather than a refusal of every sensor that says hello.
     */
    private static void checkDefaultChain(SensorConfig defaults) {
        try {
            Chain.build(defaults.chainSpec(), 64, 48).close();
        } catch (ChainSpecException e) {
            throw new ConfigException("sensor-defaults.chain: " + e.getMessage(), e);
        }
    }

    private SensorPipeline create(SensorConfig s) {
        Counters c = sensorCounters.computeIfAbsent(s.id, k -> new Counters());
        SensorPipeline p;
        try {
            p = new SensorPipeline(s, pipelineGroup.next(), publisher, clock, c,
                    config.limits.maxPendingPackets, config.limits.maxPendingBytes, config.limits.maxEventsPerPacket,
                    config.limits.maxTimeAheadMs * 1000L, extraSinks.forSensor(s.id, c));
        } catch (ChainSpecException e) {
            sensorCounters.remove(s.id, c);
            throw new ConfigException("sensor " + s.id + ": chain: " + e.getMessage(), e);
        }
        sensors.put(s.id, p);
        inputs.put(s.id, inputWrapper.wrap(p));
        return p;
    }

    /** Where TCP and UDP messages of this sensor go (its pipeline, or the edge's forwarder in front of it). */
    public SensorInput inputOf(SensorPipeline p) {
        SensorInput in = inputs.get(p.id());
        return in != null ? in : p;
    }

    /** Estimated bytes a sensor of this size holds (state per pixel plus its first work batches). */
    static long estimatedBytes(long pixels) {
        return pixels * STATE_BYTES_PER_PIXEL + 2 * 13L * (1 << 14);
    }

    /** Binds a TCP connection that sent {@code hello} to its sensor. */
    public synchronized Attach attach(SensorHello hello, Channel channel) {
        Attach found = pipelineFor(hello, String.valueOf(channel.remoteAddress()));
        if (found.pipeline() == null) {
            return found;
        }
        SensorPipeline p = found.pipeline();
        String id = p.id();
        boolean authenticated = p.config().hasToken() && tokenMatches(p.config().token, hello.getToken());
        if (fromBus.contains(id)) {
            nodeCounters.increment(NodeCounter.DUPLICATE_SENSOR);
            return Attach.error("duplicate-sensor", "sensor " + id + " is taken from the event topic by this node");
        }
        Channel old = activeTcp.get(id);
        if (old != null && old != channel && old.isActive() && !silent(old)) {
            boolean replace = config.access.duplicateSensor == AccessConfig.DuplicateSensor.REPLACE && authenticated;
            if (!replace) {
                nodeCounters.increment(NodeCounter.DUPLICATE_SENSOR);
                OnceLog.warn("duplicate:" + id, "sensor " + id + ": second connection from " + channel.remoteAddress()
                        + " refused; the connected one stays", null);
                return Attach.error("duplicate-sensor", "sensor " + id + " is already connected"
                        + (config.access.duplicateSensor == AccessConfig.DuplicateSensor.REPLACE
                                ? "; a replacing connection must carry the sensor's token" : ""));
            }
            activeTcp.put(id, channel);
            old.close();
        } else {
            activeTcp.put(id, channel);
        }
        p.setConnected(true);
        p.declareFrames(hello.getSendsFrames());
        return new Attach(p, inputOf(p), null, null);
    }

    /**
     * Starts a sensor whose hello came from the event topic (this node owns its partition): same
     * checks as a TCP hello (id, token, geometry, limits), but no connection. Repeated hellos of a
     * sensor already started return it again.
     */
    public synchronized Attach attachFromBus(SensorHello hello) {
        Attach found = pipelineFor(hello, "the event topic");
        if (found.pipeline() == null) {
            return found;
        }
        SensorPipeline p = found.pipeline();
        if (activeTcp.containsKey(p.id())) {
            nodeCounters.increment(NodeCounter.DUPLICATE_SENSOR);
            return Attach.error("duplicate-sensor", "sensor " + p.id() + " is connected to this node over TCP");
        }
        if (fromBus.add(p.id())) {
            p.setConnected(true);
        }
        p.declareFrames(hello.getSendsFrames());
        return new Attach(p, p, null, null);
    }

    /** The largest latency budget of any sensor this node has or may get (listed, running, or unlisted defaults), ms. */
    public double maxLatencyBudgetMs() {
        double max = config.sensorDefaults.latencyBudgetMs;
        for (SensorConfig s : config.sensors) {
            max = Math.max(max, s.latencyBudgetMs);
        }
        for (SensorPipeline p : sensors.values()) {
            max = Math.max(max, p.config().latencyBudgetMs); // changed at run time
        }
        return max;
    }

    /** True while this node takes the sensor from the event topic (it owns the sensor's partition). */
    public boolean fromEventTopic(String sensorId) {
        return fromBus.contains(sensorId);
    }

    /** The sensor left this node's share of the event topic. */
    public void detachFromBus(String sensorId) {
        if (fromBus.remove(sensorId)) {
            SensorPipeline p = sensors.get(sensorId);
            if (p != null) {
                p.setConnected(false);
            }
        }
    }

    /** Finds or makes the pipeline of the sensor a hello names, after checking id, token, geometry and limits. */
    private Attach pipelineFor(SensorHello hello, String from) {
        String id = hello.getSensorId();
        if (!SENSOR_ID.matcher(id).matches()) {
            nodeCounters.increment(NodeCounter.UNKNOWN_SENSOR);
            return Attach.error("bad-hello", "sensor_id must be 1 to 64 characters of A-Z a-z 0-9 . _ : -");
        }
        // Unsigned on the wire: 2^32 - 1 must not read as -1.
        long width = Integer.toUnsignedLong(hello.getWidth());
        long height = Integer.toUnsignedLong(hello.getHeight());
        SensorPipeline p = sensors.get(id);
        SensorConfig settings = p != null ? p.config() : config.sensorDefaults;
        boolean authenticated = settings.hasToken() && tokenMatches(settings.token, hello.getToken());
        if (settings.hasToken() && !authenticated) {
            nodeCounters.increment(NodeCounter.AUTH_REFUSED);
            OnceLog.warn("auth-sensor", "sensor " + id + ": hello with a wrong or missing token refused from " + from, null);
            return Attach.error("unauthorized", "sensor " + id + " needs its token");
        }
        if (p == null) {
            if (!config.acceptUnlistedSensors) {
                nodeCounters.increment(NodeCounter.UNKNOWN_SENSOR);
                return Attach.error("unknown-sensor", "sensor " + id + " is not listed and accept-unlisted-sensors is false");
            }
            Attach refused = checkNewSensor(width, height);
            if (refused != null) {
                nodeCounters.increment(NodeCounter.SENSORS_REFUSED);
                return refused;
            }
            try {
                p = create(config.sensorDefaults.forSensor(id, (int) width, (int) height));
            } catch (ConfigException e) {
                nodeCounters.increment(NodeCounter.SENSORS_REFUSED);
                OnceLog.warn("chain:" + id, "sensor " + id + ": refused: " + e.getMessage(), null);
                return Attach.error("chain", "the node cannot build its chain for this sensor: " + e.getMessage());
            } catch (IllegalArgumentException e) {
                nodeCounters.increment(NodeCounter.GEOMETRY_MISMATCH);
                return Attach.error("bad-geometry", e.getMessage());
            }
        } else if (p.width() != width || p.height() != height) {
            nodeCounters.increment(NodeCounter.GEOMETRY_MISMATCH);
            return Attach.error("geometry-mismatch", "sensor " + id + " is " + p.width() + "x" + p.height()
                    + ", hello says " + width + "x" + height);
        }
        return new Attach(p, p, null, null);
    }

    /**
     * True if a connection has read nothing for the hello timeout: its peer is most likely gone
     * (a sensor that lost its network and reconnects), so a newcomer may take its place.
     */
    private boolean silent(Channel ch) {
        long[] lastRead = ch.attr(ConnectionGuard.LAST_READ).get();
        return lastRead != null && clock.monotonicNanos() - lastRead[0] > config.limits.helloTimeoutMs * 1_000_000L;
    }

    /** Why a new unlisted sensor of this size cannot be taken, or null. */
    private Attach checkNewSensor(long width, long height) {
        long pixels = width * height;
        if (width < 1 || height < 1 || width > 65536 || height > 32768 || pixels > config.limits.maxSensorPixels) {
            return Attach.error("bad-geometry", "geometry " + width + "x" + height + " outside 1x1 .. 65536x32768 or above "
                    + "limits.max-sensor-pixels=" + config.limits.maxSensorPixels);
        }
        if (sensors.size() >= config.limits.maxSensors) {
            return Attach.error("limit", "sensor limit limits.max-sensors=" + config.limits.maxSensors + " reached");
        }
        long held = 0;
        for (SensorPipeline s : sensors.values()) {
            held += estimatedBytes((long) s.width() * s.height());
        }
        long need = estimatedBytes(pixels);
        if (held + need > heapBudgetBytes) {
            return Attach.error("limit", "not enough memory for a " + width + "x" + height + " sensor: about "
                    + (need >> 20) + " MiB needed, " + ((heapBudgetBytes - held) >> 20) + " MiB left for sensors");
        }
        return null;
    }

    /** Constant-time comparison of a configured token with what a peer sent. */
    public static boolean tokenMatches(String expected, String given) {
        return MessageDigest.isEqual(expected.getBytes(StandardCharsets.UTF_8), given.getBytes(StandardCharsets.UTF_8));
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

    /**
     * Forgets unlisted sensors that have no connection and no input for the configured time; their
     * counters go with them. Returns how many were forgotten. Any thread.
     */
    public synchronized int evictIdle(long nowNanos) {
        long idleNanos = config.limits.sensorIdleEvictS * 1_000_000_000L;
        if (idleNanos <= 0) {
            return 0;
        }
        int evicted = 0;
        for (SensorPipeline p : sensors.values()) {
            if (config.sensor(p.id()) == null && !p.connected() && !activeTcp.containsKey(p.id()) && !fromBus.contains(p.id())
                    && nowNanos - p.lastInputNanos() > idleNanos) {
                sensors.remove(p.id());
                inputs.remove(p.id());
                sensorCounters.remove(p.id());
                p.close();
                nodeCounters.increment(NodeCounter.SENSORS_EVICTED);
                evicted++;
            }
        }
        return evicted;
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
