package dev.afterglow.node.live;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.afterglow.filters.chain.StageSpec;
import dev.afterglow.metrics.LatencyRecorder;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;

/**
 * The live view's text message: one JSON object of a sensor's rates over the interval since the
 * previous message, its latency percentiles and its chain. Rates are 0 in the first message.
 * Read from the sensor's lock-free counters and latency recorders on a viewer's I/O thread.
 *
 * <pre>
 * {"type":"stats", "sensor":"dock-cam", "intervalS":0.5,
 *  "eventsPerS":..., "shedEventsPerS":..., "rejectedEventsPerS":..., "malformedPacketsPerS":...,
 *  "framesPerS":..., "frameRateHz":50.0, "fps":10, "liveSent":..., "liveSkipped":...,
 *  "pendingPackets":0, "width":640, "height":480, "liveWidth":320, "liveHeight":240, "factor":2,
 *  "latencyMs":{"sensorToPublish":{"p50":...,"p99":...,"p999":...}, "arrivalToApplied":{...}},
 *  "chain":"refractory(period=100us) | ...", "stages":[{"name":"refractory","params":{"period":"100us"}}, ...]}
 * </pre>
 *
 * {@code shedEventsPerS} counts events shed for the latency budget or a full queue,
 * {@code rejectedEventsPerS} events outside the sensor or late, {@code malformedPacketsPerS}
 * rejected packets. Latency percentiles cover the recorders' sliding window (the last minute).
 */
final class LiveStats {
    private static final ObjectMapper JSON = new ObjectMapper();

    private final SensorPipeline sensor;
    private final int fps;
    private final NodeClock clock;
    private long prevNanos = Long.MIN_VALUE;
    private long prevEvents;
    private long prevShed;
    private long prevRejected;
    private long prevMalformed;
    private long prevFrames;

    LiveStats(SensorPipeline sensor, int fps, NodeClock clock) {
        this.sensor = sensor;
        this.fps = fps;
        this.clock = clock;
    }

    /** The next message. */
    String next() {
        Counters c = sensor.counters();
        long now = clock.monotonicNanos();
        long events = c.get(NodeCounter.EVENTS_RECEIVED);
        long shed = c.get(NodeCounter.EVENTS_SHED_LATENCY) + c.get(NodeCounter.EVENTS_SHED_QUEUE);
        long rejected = c.get(NodeCounter.EVENTS_OUTSIDE_SENSOR) + c.get(NodeCounter.EVENTS_LATE);
        long malformed = c.get(NodeCounter.PACKETS_MALFORMED);
        long frames = c.get(NodeCounter.FRAMES_PUBLISHED);
        double dt = prevNanos == Long.MIN_VALUE ? 0 : (now - prevNanos) / 1e9;
        ObjectNode o = JSON.createObjectNode();
        o.put("type", "stats");
        o.put("sensor", sensor.id());
        o.put("intervalS", dt);
        o.put("eventsPerS", rate(events - prevEvents, dt));
        o.put("shedEventsPerS", rate(shed - prevShed, dt));
        o.put("rejectedEventsPerS", rate(rejected - prevRejected, dt));
        o.put("malformedPacketsPerS", rate(malformed - prevMalformed, dt));
        o.put("framesPerS", rate(frames - prevFrames, dt));
        o.put("frameRateHz", sensor.frameRateHz());
        o.put("fps", fps);
        o.put("liveSent", c.get(NodeCounter.LIVE_FRAMES_SENT));
        o.put("liveSkipped", c.get(NodeCounter.LIVE_FRAMES_SKIPPED));
        o.put("pendingPackets", sensor.pendingPackets());
        LiveRaster r = sensor.live().raster();
        o.put("width", sensor.width());
        o.put("height", sensor.height());
        o.put("liveWidth", r.width());
        o.put("liveHeight", r.height());
        o.put("factor", r.factor());
        ObjectNode latency = o.putObject("latencyMs");
        percentiles(latency.putObject("sensorToPublish"), sensor.sensorToPublishLatency());
        percentiles(latency.putObject("arrivalToApplied"), sensor.arrivalToAppliedLatency());
        o.put("chain", sensor.config().chain);
        ArrayNode stages = o.putArray("stages");
        for (StageSpec s : sensor.chain().spec().stages()) {
            ObjectNode st = stages.addObject();
            st.put("name", s.kind().label());
            ObjectNode params = st.putObject("params");
            // Canonical text "name(key=value, key=value)": values keep their canonical units.
            String text = s.toString();
            String inside = text.substring(text.indexOf('(') + 1, text.lastIndexOf(')'));
            for (String kv : inside.split(",\\s*")) {
                int eq = kv.indexOf('=');
                if (eq > 0) {
                    params.put(kv.substring(0, eq), kv.substring(eq + 1));
                }
            }
        }
        prevNanos = now;
        prevEvents = events;
        prevShed = shed;
        prevRejected = rejected;
        prevMalformed = malformed;
        prevFrames = frames;
        return o.toString();
    }

    private static double rate(long delta, double dt) {
        return dt > 0 ? delta / dt : 0;
    }

    private static void percentiles(ObjectNode o, LatencyRecorder r) {
        o.put("p50", r.valueAtQuantileNanos(0.5) / 1e6);
        o.put("p99", r.valueAtQuantileNanos(0.99) / 1e6);
        o.put("p999", r.valueAtQuantileNanos(0.999) / 1e6);
    }
}
