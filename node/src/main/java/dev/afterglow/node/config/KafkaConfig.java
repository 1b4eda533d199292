package dev.afterglow.node.config;

import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;

/**
 * The node's part in a fleet on Apache Kafka (off unless {@code bootstrap-servers} is set). A node
 * can be an edge (it forwards what its sensors send over TCP/UDP to the event topic), a member of
 * a processing group (it takes sensors from the event topic), a frame producer (it writes its
 * frames to the frame topic), or any mix.
 *
 * <pre>
 * kafka:
 *   bootstrap-servers: "broker-1:9092,broker-2:9092"
 *   client-properties: {security.protocol: SSL, ssl.truststore.location: /etc/afterglow/trust.p12}
 *   event-topic: afterglow.events
 *   forward: true               # edge: forward TCP/UDP sensors' messages to event-topic
 *   process-forwarded: false    # edge: run the chain here as well
 *   consume: true               # processing group: take sensors from event-topic
 *   group: afterglow-processing
 *   frame-topic: afterglow.frames   # "" = no frame topic
 *   frame-format: gray8         # or log-f32
 *   frame-rate-hz: 25           # 0: every frame of the sensor's grid
 *   frame-downscale: 2          # 1, 2, 4 or 8
 * </pre>
 */
public final class KafkaConfig {
    /** Topic names Kafka accepts: up to 249 of letters, digits, '.', '_' and '-'. */
    private static final Pattern TOPIC = Pattern.compile("[A-Za-z0-9._-]{1,249}");
    /** Client settings the node sets itself; passing them through would break its guarantees. */
    private static final Set<String> OWN_PROPERTIES = Set.of("bootstrap.servers", "group.id", "enable.auto.commit",
            "key.serializer", "value.serializer", "key.deserializer", "value.deserializer",
            "partition.assignment.strategy", "max.block.ms", "isolation.level");

    /** host:port[,host:port...]; empty: no Kafka. */
    public String bootstrapServers = "";
    /** Passed to every Kafka client as they are (security, timeouts, buffer sizes). */
    public Map<String, String> clientProperties = new LinkedHashMap<>();
    /** Topic of sensors' messages, keyed by sensor id. */
    public String eventTopic = "afterglow.events";
    /** Edge: forward every message that sensors send this node over TCP or UDP to the event topic. */
    public boolean forward;
    /** With {@code forward}: also run the sensors' chains on this node. */
    public boolean processForwarded;
    /** Processing group: take sensors' messages from the event topic. */
    public boolean consume;
    /** Consumer group of the processing nodes. */
    public String group = "afterglow-processing";
    /** Name of this node in the group (client id, commit metadata); empty: host name and process id. */
    public String memberName = "";
    /** Topic frames are written to, keyed by sensor id; empty: none. */
    public String frameTopic = "";
    /** Pixels of frame records: gray8 or log-f32. */
    public String frameFormat = "gray8";
    /** Frames per second written to the frame topic (every k-th frame of the sensor's grid); 0: every frame. */
    public double frameRateHz;
    /** Frame records are downscaled by this factor (1, 2, 4 or 8; box average), as a subscriber can ask. */
    public int frameDownscale = 1;
    /** Offsets of the records handed to pipelines are committed this often. */
    public int commitIntervalMs = 200;
    /** A member that sends no heartbeat for this long is taken out of the group and its sensors move. */
    public int sessionTimeoutMs = 3000;
    /** Heartbeat interval of the group members. */
    public int heartbeatIntervalMs = 500;
    /** Edge: each sensor's hello is repeated this often, so a node that takes the sensor over mid-stream can start it. */
    public int helloRepeatMs = 1000;
    /** Records older than the sensor's latency budget plus this (transit from sensor to node) are skipped, counted. */
    public int transitAllowanceMs = 200;
    /** Largest record value accepted from the event topic, bytes. */
    public int maxRecordBytes = 4 << 20;

    /** True when Kafka is configured. */
    public boolean enabled() {
        return bootstrapServers != null && !bootstrapServers.isBlank();
    }

    /** True when frames go to a topic. */
    public boolean producesFrames() {
        return enabled() && frameTopic != null && !frameTopic.isEmpty();
    }

    /** Checks the values; {@code at} prefixes the setting in messages. */
    public void validate(String at) {
        Checks.present(at + ".client-properties", clientProperties);
        if (!enabled()) {
            if (forward || consume || (frameTopic != null && !frameTopic.isEmpty())) {
                throw new ConfigException(at + ".bootstrap-servers is needed for forward, consume or frame-topic");
            }
            return;
        }
        for (String server : bootstrapServers.split(",")) {
            String s = server.trim();
            int colon = s.lastIndexOf(':');
            if (colon <= 0 || colon == s.length() - 1) {
                throw new ConfigException(at + ".bootstrap-servers: '" + s + "' is not host:port");
            }
            try {
                int port = Integer.parseInt(s.substring(colon + 1));
                Checks.range(at + ".bootstrap-servers port of " + s, port, 1, 65535);
            } catch (NumberFormatException e) {
                throw new ConfigException(at + ".bootstrap-servers: '" + s + "' has no port number");
            }
        }
        for (String key : clientProperties.keySet()) {
            if (OWN_PROPERTIES.contains(key)) {
                throw new ConfigException(at + ".client-properties." + key + " is set by the node and cannot be passed through");
            }
        }
        if (!forward && !consume && frameTopic.isEmpty()) {
            throw new ConfigException(at + ": bootstrap-servers is set but forward, consume and frame-topic are all off");
        }
        topic(at + ".event-topic", eventTopic);
        if (!frameTopic.isEmpty()) {
            topic(at + ".frame-topic", frameTopic);
            if (frameTopic.equals(eventTopic)) {
                throw new ConfigException(at + ".frame-topic must differ from event-topic");
            }
        }
        if (forward && consume && processForwarded) {
            throw new ConfigException(at + ": process-forwarded and consume would run the same sensors twice on this node");
        }
        if (consume) {
            Checks.present(at + ".group", group);
            if (group.isBlank() || group.length() > 255) {
                throw new ConfigException(at + ".group must be 1 to 255 characters");
            }
        }
        if (!frameFormat.equals("gray8") && !frameFormat.equals("log-f32")) {
            throw new ConfigException(at + ".frame-format must be gray8 or log-f32, not " + frameFormat);
        }
        Checks.range(at + ".frame-rate-hz", frameRateHz, 0, 1000);
        if (frameDownscale != 1 && frameDownscale != 2 && frameDownscale != 4 && frameDownscale != 8) {
            throw new ConfigException(at + ".frame-downscale must be 1, 2, 4 or 8, not " + frameDownscale);
        }
        Checks.range(at + ".commit-interval-ms", commitIntervalMs, 10, 60_000);
        Checks.range(at + ".session-timeout-ms", sessionTimeoutMs, 500, 600_000);
        Checks.range(at + ".heartbeat-interval-ms", heartbeatIntervalMs, 50, sessionTimeoutMs / 2);
        Checks.range(at + ".hello-repeat-ms", helloRepeatMs, 50, 600_000);
        Checks.range(at + ".transit-allowance-ms", transitAllowanceMs, 0, 3_600_000);
        Checks.range(at + ".max-record-bytes", maxRecordBytes, 1024, 64 << 20);
    }

    private static void topic(String setting, String name) {
        if (name == null || !TOPIC.matcher(name).matches() || name.equals(".") || name.equals("..")) {
            throw new ConfigException(setting + " '" + name + "' is not a Kafka topic name (1 to 249 of A-Z a-z 0-9 . _ -)");
        }
    }

    /** The member name: configured, or host name and process id. */
    public String member() {
        if (memberName != null && !memberName.isBlank()) {
            return memberName;
        }
        String host;
        try {
            host = java.net.InetAddress.getLocalHost().getHostName();
        } catch (java.net.UnknownHostException e) {
            host = "node";
        }
        return host + "-" + ProcessHandle.current().pid();
    }
}
