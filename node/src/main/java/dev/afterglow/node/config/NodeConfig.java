package dev.afterglow.node.config;

import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.databind.node.TextNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.PropertyNamingStrategies;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.Iterator;
import java.util.Map;
import java.util.List;
import java.util.Set;

/**
 * The node's whole configuration. Read from YAML with kebab-case keys (Jackson, so we do not
 * hand-write a parser); every field has a default, so an empty file or no file at all gives a
 * working node on loopback. {@link #validate()} checks everything once at start.
 *
 * <pre>
 * listen:
 *   address: 127.0.0.1
 *   ingest-tcp-port: 7301
 *   ingest-udp-port: 7302
 *   subscriber-port: 7303
 *   http-port: 7380
 * control:            # run-time changes over HTTP, off unless enabled
 *   enabled: false
 *   token: ""         # if set, requests need "Authorization: Bearer TOKEN"
 * accept-unlisted-sensors: true
 * sensor-defaults:
 *   chain: "refractory(period=100us) | background-activity(window=5ms) | high-pass(cutoff=3rad/s)"
 *   frame-rate-hz: 50
 * sensors:
 *   - id: dock-cam
 *     width: 640
 *     height: 480
 *     frame-rate-hz: 100
 *     latency-budget-ms: 20
 * </pre>
 */
public final class NodeConfig {
    public ListenConfig listen = new ListenConfig();
    public LimitsConfig limits = new LimitsConfig();
    /** Run-time changes over HTTP; off by default. */
    public ControlConfig control = new ControlConfig();
    /** TLS for the TCP listeners; off by default. */
    public TlsConfig tls = new TlsConfig();
    /** Who may connect (duplicate sensors, subscriber tokens, web origins). */
    public AccessConfig access = new AccessConfig();
    /** Fleets on Apache Kafka (event topic, processing group, frame topic); off by default. */
    public KafkaConfig kafka = new KafkaConfig();
    /**
     * Whether the node runs its configured chains over a generated stream for about a second
     * before it accepts sensors, so the JIT has compiled them when the first packets arrive.
     */
    public boolean warmUp = true;
    /** Whether a sensor not listed under {@code sensors} may connect (it gets {@code sensor-defaults}). */
    public boolean acceptUnlistedSensors = true;
    /** Settings for unlisted sensors (id and geometry come from their hello). */
    public SensorConfig sensorDefaults = new SensorConfig();
    public List<SensorConfig> sensors = new ArrayList<>();

    /** Keys of a listed sensor that never come from {@code sensor-defaults}. */
    private static final Set<String> OWN_KEYS = Set.of("id", "width", "height");

    private static ObjectMapper mapper() {
        return new ObjectMapper(new YAMLFactory())
                .setPropertyNamingStrategy(PropertyNamingStrategies.KEBAB_CASE)
                .enable(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
                .disable(SerializationFeature.FAIL_ON_EMPTY_BEANS);
    }

    /** Reads and validates a YAML file. */
    public static NodeConfig load(Path file) {
        try {
            String text = Files.readString(file);
            return parse(text, file.toString());
        } catch (IOException e) {
            throw new ConfigException("cannot read config " + file + ": " + e.getMessage(), e);
        }
    }

    /** Parses and validates YAML text; {@code source} names it in errors. */
    public static NodeConfig parse(String yaml, String source) {
        NodeConfig config;
        try {
            ObjectMapper mapper = mapper();
            JsonNode tree = yaml.isBlank() ? null : mapper.readTree(yaml);
            inheritDefaults(tree);
            config = tree == null || tree.isNull() || tree.isMissingNode() ? new NodeConfig() : mapper.treeToValue(tree, NodeConfig.class);
        } catch (IOException e) {
            String msg = e.getMessage() == null ? e.toString() : e.getMessage().lines().findFirst().orElse("");
            throw new ConfigException(source + ": " + msg, e);
        }
        if (config == null) {
            config = new NodeConfig();
        }
        config.validate();
        return config;
    }

    /**
     * Gives every listed sensor the {@code sensor-defaults} settings it does not set itself (id and
     * geometry are the sensor's own), so listed sensors inherit what they leave out.
     */
    private static void inheritDefaults(JsonNode tree) {
        if (tree == null || !tree.isObject()) {
            return;
        }
        JsonNode defaults = tree.get("sensor-defaults");
        JsonNode list = tree.get("sensors");
        if (defaults == null || !defaults.isObject() || list == null || !list.isArray()) {
            return;
        }
        for (JsonNode sensor : list) {
            if (!sensor.isObject()) {
                continue;
            }
            Iterator<Map.Entry<String, JsonNode>> fields = defaults.fields();
            while (fields.hasNext()) {
                Map.Entry<String, JsonNode> f = fields.next();
                if (!OWN_KEYS.contains(f.getKey()) && !sensor.has(f.getKey())) {
                    ((ObjectNode) sensor).set(f.getKey(), f.getValue().deepCopy());
                }
            }
        }
    }

    /** The defaults, validated. */
    public static NodeConfig defaults() {
        NodeConfig c = new NodeConfig();
        c.validate();
        return c;
    }

    /** Checks every setting; throws {@link ConfigException} naming the first bad one. */
    public NodeConfig validate() {
        if (listen == null || limits == null || control == null || tls == null || access == null
                || sensorDefaults == null || sensors == null || kafka == null) {
            throw new ConfigException("listen, limits, control, tls, access, kafka, sensor-defaults and sensors must not be null");
        }
        listen.validate();
        limits.validate();
        control.validate(listen);
        tls.validate();
        access.validate();
        kafka.validate("kafka");
        sensorDefaults.validate("sensor-defaults", false);
        Set<String> ids = new HashSet<>();
        for (int i = 0; i < sensors.size(); i++) {
            SensorConfig s = sensors.get(i);
            s.validate("sensors[" + i + "]", true);
            if ((long) s.width * s.height > limits.maxSensorPixels) {
                throw new ConfigException("sensors[" + i + "] " + s.width + "x" + s.height + " = " + (long) s.width * s.height
                        + " pixels > limits.max-sensor-pixels=" + limits.maxSensorPixels);
            }
            if (!ids.add(s.id)) {
                throw new ConfigException("sensors[" + i + "].id=" + s.id + " is listed twice");
            }
        }
        return this;
    }

    private static void redact(JsonNode node) {
        if (node.isObject()) {
            Iterator<Map.Entry<String, JsonNode>> fields = node.fields();
            while (fields.hasNext()) {
                Map.Entry<String, JsonNode> f = fields.next();
                if (f.getKey().equals("token") && f.getValue().isTextual() && !f.getValue().asText().isEmpty()) {
                    f.setValue(TextNode.valueOf("<redacted>"));
                } else {
                    redact(f.getValue());
                }
            }
        } else if (node.isArray()) {
            node.forEach(NodeConfig::redact);
        }
    }

    /** The listed sensor with this id, or null. */
    public SensorConfig sensor(String id) {
        for (SensorConfig s : sensors) {
            if (s.id.equals(id)) {
                return s;
            }
        }
        return null;
    }

    /** The effective configuration as YAML, for the start-up log; every secret shows as {@code <redacted>}. */
    public String toYaml() {
        try {
            ObjectMapper mapper = mapper();
            JsonNode tree = mapper.valueToTree(this);
            redact(tree);
            return mapper.writeValueAsString(tree);
        } catch (IOException e) {
            throw new IllegalStateException(e);
        }
    }
}
