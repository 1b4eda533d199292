package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.ErrorReport;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * Unlisted sensors are held to a count and a size, refused with an error report when over, and
 * forgotten (with their meters) once idle, so a peer inventing sensor ids cannot fill the heap.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class SensorLimitsEndToEndTest {

    private static ErrorReport hello(AfterglowNode node, String id, int w, int h) throws Exception {
        try (SensorClient c = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), id, w, h, false)) {
            return c.awaitError(2_000);
        }
    }

    @Test
    void shouldCapCountAndSizeAndForgetIdleSensors() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: -1, http-port: -1}
                limits: {max-sensors: 2, max-sensor-pixels: 307200, sensor-idle-evict-s: 1}
                """, "test");
        try (AfterglowNode node = AfterglowNode.start(config)) {
            Counters counters = node.counters();
            ErrorReport huge = hello(node, "huge", 32768, 32768);
            assertEquals("bad-geometry", huge.getCode());
            assertTrue(huge.getMessage().contains("limits.max-sensor-pixels=307200"), huge.getMessage());
            assertEquals("bad-geometry", hello(node, "wide", -1, 1).getCode(), "2^32 - 1 read as unsigned, not -1");
            try (SensorClient a = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "a", 640, 480, false);
                    SensorClient b = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "b", 64, 48, false)) {
                assertNull(a.awaitError(300));
                assertNull(b.awaitError(300));
                assertEquals("limit", hello(node, "c", 64, 48).getCode());
            }
            assertEquals(3, counters.get(NodeCounter.SENSORS_REFUSED));
            assertEquals(0, counters.get(NodeCounter.INTERNAL_ERRORS));
            // both disconnected: forgotten after about a second of idleness, meters included
            StreamingEndToEndTest.waitFor(() -> node.sensors().all().isEmpty());
            assertEquals(2, counters.get(NodeCounter.SENSORS_EVICTED));
            String metrics = node.meterRegistry().scrape();
            assertFalse(metrics.contains("sensor=\"a\""), "meters of a forgotten sensor are removed");
            assertNull(hello(node, "c", 64, 48), "room again");
        }
    }
}
