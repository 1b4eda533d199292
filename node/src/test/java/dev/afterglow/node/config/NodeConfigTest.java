package dev.afterglow.node.config;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

class NodeConfigTest {

    @Test
    void shouldGiveLoopbackDefaultsWithoutAFile() {
        NodeConfig c = NodeConfig.parse("", "empty");
        assertEquals("127.0.0.1", c.listen.address);
        assertTrue(c.acceptUnlistedSensors);
        assertTrue(c.toYaml().contains("ingest-tcp-port: 7301"), c.toYaml());
    }

    @Test
    void shouldNameSettingValueAndLimit() {
        assertEquals("sensors[0].frame-rate-hz=5000.0 > 1000.0", error("""
                sensors:
                  - {id: a, width: 10, height: 10, frame-rate-hz: 5000}
                """));
        assertEquals("limits.max-subscribers=0 < 1", error("limits: {max-subscribers: 0}"));
        assertEquals("sensors[1].id=a is listed twice", error("""
                sensors:
                  - {id: a, width: 10, height: 10}
                  - {id: a, width: 10, height: 10}
                """));
        assertTrue(error("sensors: [{id: a, width: 10, height: 10, chain: \"high-pass(cutoff=20000rad/s)\"}]")
                .contains("sensors[0].chain: high-pass.cutoff=20000rad/s > 10000rad/s"));
        assertTrue(error("sensor-defaults: {tone-map: \"loud 1 2\"}").startsWith("sensor-defaults.tone-map="));
        assertTrue(error("listen: {no-such-key: 1}").contains("no-such-key"));
    }

    private static String error(String yaml) {
        return assertThrows(ConfigException.class, () -> NodeConfig.parse(yaml, "test")).getMessage();
    }
}
