package dev.afterglow.node.config;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** The {@code kafka} section: off by default, and every wrong setting named at start. */
class KafkaConfigTest {
    private static String error(String kafka) {
        return assertThrows(ConfigException.class, () -> NodeConfig.parse("kafka: " + kafka, "test")).getMessage();
    }

    @Test
    void offByDefault() {
        assertFalse(NodeConfig.parse("", "empty").kafka.enabled());
    }

    @Test
    void acceptsAProcessingMemberWithPassThroughSecurity() {
        NodeConfig c = NodeConfig.parse("""
                kafka:
                  bootstrap-servers: "b1:9093, b2:9093"
                  consume: true
                  frame-topic: afterglow.frames
                  client-properties: {security.protocol: SASL_SSL, sasl.mechanism: SCRAM-SHA-512}
                """, "test");
        assertTrue(c.kafka.enabled());
        assertTrue(c.kafka.producesFrames());
        assertEquals("SASL_SSL", c.kafka.clientProperties.get("security.protocol"));
    }

    @Test
    void namesWhatIsWrong() {
        assertEquals("kafka.bootstrap-servers is needed for forward, consume or frame-topic", error("{consume: true}"));
        assertEquals("kafka.bootstrap-servers: 'broker' is not host:port", error("{bootstrap-servers: broker, consume: true}"));
        assertEquals("kafka.bootstrap-servers: 'b:x' has no port number", error("{bootstrap-servers: 'b:x', consume: true}"));
        assertEquals("kafka.bootstrap-servers port of b:70000=70000 > 65535",
                error("{bootstrap-servers: 'b:70000', consume: true}"));
        assertEquals("kafka: bootstrap-servers is set but forward, consume and frame-topic are all off",
                error("{bootstrap-servers: 'b:9092'}"));
        assertEquals("kafka.event-topic 'a/b' is not a Kafka topic name (1 to 249 of A-Z a-z 0-9 . _ -)",
                error("{bootstrap-servers: 'b:9092', consume: true, event-topic: 'a/b'}"));
        assertEquals("kafka.frame-topic must differ from event-topic",
                error("{bootstrap-servers: 'b:9092', consume: true, frame-topic: afterglow.events}"));
        assertEquals("kafka: process-forwarded and consume would run the same sensors twice on this node",
                error("{bootstrap-servers: 'b:9092', consume: true, forward: true, process-forwarded: true}"));
        assertEquals("kafka.client-properties.group.id is set by the node and cannot be passed through",
                error("{bootstrap-servers: 'b:9092', consume: true, client-properties: {group.id: x}}"));
        assertEquals("kafka.frame-format must be gray8 or log-f32, not png",
                error("{bootstrap-servers: 'b:9092', frame-topic: f, frame-format: png}"));
        assertEquals("kafka.heartbeat-interval-ms=2000 > 1500",
                error("{bootstrap-servers: 'b:9092', consume: true, session-timeout-ms: 3000, heartbeat-interval-ms: 2000}"));
    }

    /** The edge and member configurations of the README's fleet recipe parse and validate as they stand. */
    @Test
    void readmeFleetRecipeConfigsValidate() throws Exception {
        String readme = java.nio.file.Files.readString(java.nio.file.Path.of("..", "README.md"));
        for (String file : java.util.List.of("edge.yaml", "member.yaml")) {
            String start = "cat > " + file + " <<'YAML'\n";
            int from = readme.indexOf(start);
            assertTrue(from >= 0, file + " recipe in README");
            from += start.length();
            String yaml = readme.substring(from, readme.indexOf("\nYAML\n", from));
            NodeConfig c = NodeConfig.parse(yaml, "README " + file);
            assertTrue(c.kafka.enabled(), file);
        }
    }
}
