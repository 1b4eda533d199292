package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * {@code afterglow feed} takes a sensor's token from {@code AFTERGLOW_SENSOR_TOKEN}: over UDP it
 * seals every datagram with it and the node takes them; without it every datagram is refused.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class FeedTokenTest {
    private static final String TOKEN = "feed-token-0123456789";

    private static void feed(AfterglowNode node, String token) throws Exception {
        ProcessBuilder pb = new ProcessBuilder(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-cp", System.getProperty("java.class.path"), "dev.afterglow.node.AfterglowCli", "feed",
                "--node", "127.0.0.1:" + node.ingestUdpPort(), "--transport", "udp", "--sensor-id", "sealed",
                "--width", "64", "--height", "48", "--seconds", "0.3").redirectErrorStream(true);
        pb.environment().remove("AFTERGLOW_SENSOR_TOKEN");
        if (token != null) {
            pb.environment().put("AFTERGLOW_SENSOR_TOKEN", token);
        }
        Process p = pb.start();
        try {
            String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
            assertTrue(p.waitFor(30, TimeUnit.SECONDS), out);
            assertEquals(0, p.exitValue(), out);
        } finally {
            p.destroyForcibly();
        }
    }

    @Test
    void shouldSealDatagramsWithTheTokenFromTheEnvironment() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: 0, subscriber-port: -1, http-port: -1}
                warm-up: false
                sensors: [{id: sealed, width: 64, height: 48, token: "%s"}]
                """.formatted(TOKEN), "test");
        try (AfterglowNode node = AfterglowNode.start(config)) {
            var sensor = node.sensors().get("sealed").counters();
            feed(node, null);
            StreamingEndToEndTest.waitFor(() -> node.counters().get(NodeCounter.UDP_REFUSED) > 0);
            Thread.sleep(500); // the last datagrams of the first run are counted
            assertEquals(0, sensor.get(NodeCounter.PACKETS_UDP), "unsealed: nothing reached the sensor");
            feed(node, TOKEN);
            long refused = node.counters().get(NodeCounter.UDP_REFUSED);
            StreamingEndToEndTest.waitFor(() -> sensor.get(NodeCounter.EVENTS_UDP) > 0);
            assertEquals(refused, node.counters().get(NodeCounter.UDP_REFUSED), "sealed: none refused");
        }
    }
}
