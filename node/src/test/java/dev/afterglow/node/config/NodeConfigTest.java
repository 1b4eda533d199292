package dev.afterglow.node.config;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
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

    @Test
    void shouldLetListedSensorsInheritWhatTheyDoNotSet() {
        NodeConfig c = NodeConfig.parse("""
                sensor-defaults:
                  chain: "high-pass(cutoff=2rad/s)"
                  frame-rate-hz: 25
                  latency-budget-ms: 80
                sensors:
                  - {id: a, width: 10, height: 10}
                  - {id: b, width: 10, height: 10, frame-rate-hz: 100}
                """, "test");
        SensorConfig a = c.sensor("a");
        assertEquals("high-pass(cutoff=2rad/s)", a.chain);
        assertEquals(25, a.frameRateHz);
        assertEquals(80, a.latencyBudgetMs);
        SensorConfig b = c.sensor("b");
        assertEquals(100, b.frameRateHz, "a sensor's own setting wins");
        assertEquals("high-pass(cutoff=2rad/s)", b.chain);
        assertEquals(10, b.width, "geometry is never inherited");
    }

    @Test
    void shouldNeverPrintSecrets() {
        NodeConfig c = NodeConfig.parse("""
                control: {enabled: true, token: "control-secret-0123456789"}
                access:
                  subscriber-tokens: [{name: detector, token: "subscriber-secret-0123456789"}]
                sensors:
                  - {id: a, width: 10, height: 10, token: "sensor-secret-0123456789"}
                """, "test");
        String yaml = c.toYaml();
        assertFalse(yaml.contains("secret"), yaml);
        assertTrue(yaml.contains("<redacted>"), yaml);
        assertTrue(yaml.contains("detector"), "names stay: " + yaml);
    }

    @Test
    void shouldRefuseShortTokensAndOversizedSensors() {
        assertEquals("sensors[0].token is shorter than 16 characters", error("sensors: [{id: a, width: 10, height: 10, token: short}]"));
        assertEquals("access.subscriber-tokens[0].token is shorter than 16 characters",
                error("access: {subscriber-tokens: [{name: x, token: short}]}"));
        assertTrue(error("sensors: [{id: a, width: 32768, height: 32768}]").contains("> limits.max-sensor-pixels=4194304"));
        assertTrue(error("sensors: [{id: a, width: 8, height: 8, udp-from: [\"example.org\"]}]").startsWith("sensors[0].udp-from[0]="));
        assertEquals(AccessConfig.DuplicateSensor.REPLACE, NodeConfig.parse("access: {duplicate-sensor: replace}", "t").access.duplicateSensor);
    }

    private static String error(String yaml) {
        return assertThrows(ConfigException.class, () -> NodeConfig.parse(yaml, "test")).getMessage();
    }
}
