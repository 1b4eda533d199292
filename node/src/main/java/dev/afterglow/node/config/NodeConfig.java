package dev.afterglow.node.config;

import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.PropertyNamingStrategies;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
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
    /** Whether a sensor not listed under {@code sensors} may connect (it gets {@code sensor-defaults}). */
    public boolean acceptUnlistedSensors = true;
    /** Settings for unlisted sensors (id and geometry come from their hello). */
    public SensorConfig sensorDefaults = new SensorConfig();
    public List<SensorConfig> sensors = new ArrayList<>();

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
            config = yaml.isBlank() ? new NodeConfig() : mapper().readValue(yaml, NodeConfig.class);
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

    /** The defaults, validated. */
    public static NodeConfig defaults() {
        NodeConfig c = new NodeConfig();
        c.validate();
        return c;
    }

    /** Checks every setting; throws {@link ConfigException} naming the first bad one. */
    public NodeConfig validate() {
        if (listen == null || limits == null || control == null || tls == null || access == null
                || sensorDefaults == null || sensors == null) {
            throw new ConfigException("listen, limits, control, tls, access, sensor-defaults and sensors must not be null");
        }
        listen.validate();
        limits.validate();
        control.validate(listen);
        tls.validate();
        access.validate();
        sensorDefaults.validate("sensor-defaults", false);
        Set<String> ids = new HashSet<>();
        for (int i = 0; i < sensors.size(); i++) {
            SensorConfig s = sensors.get(i);
            s.validate("sensors[" + i + "]", true);
            if (!ids.add(s.id)) {
                throw new ConfigException("sensors[" + i + "].id=" + s.id + " is listed twice");
            }
        }
        return this;
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

    /** The effective configuration as YAML, for the start-up log. */
    public String toYaml() {
        try {
            return mapper().writeValueAsString(this);
        } catch (IOException e) {
            throw new IllegalStateException(e);
        }
    }
}
