package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * A datagram as large as the Java UDP client sends (8000 events, about 64 KB, under the 65,507-byte
 * UDP payload limit of IPv4: RFC 768 length field minus the IP and UDP headers) reaches the chain
 * whole instead of being cut to the receive buffer and counted as malformed.
 */
@Timeout(value = 30, unit = TimeUnit.SECONDS)
class UdpLargeDatagramTest {

    @Test
    void shouldTakeAFullSizeDatagramWhole() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: 0, subscriber-port: -1, http-port: -1}
                sensors:
                  - {id: wide, width: 640, height: 480, frame-rate-hz: 50, latency-budget-ms: 5000}
                """, "test");
        int n = UdpSensorClient.MAX_EVENTS_PER_DATAGRAM;
        EventBatch batch = new EventBatch(n);
        SplittableRandom random = new SplittableRandom(3);
        batch.reset(1_000_000);
        for (int i = 0; i < n; i++) {
            batch.add(random.nextInt(640), random.nextInt(480), 1_000_000 + i / 4, random.nextBoolean() ? 1 : -1);
        }
        try (AfterglowNode node = AfterglowNode.start(config);
                UdpSensorClient sensor = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), "wide")) {
            sensor.sendEvents(batch);
            Counters c = node.sensors().get("wide").counters();
            long deadline = System.nanoTime() + 10_000_000_000L;
            while ((c.get(NodeCounter.EVENTS_RECEIVED) < n && node.counters().get(NodeCounter.MESSAGES_MALFORMED) == 0)
                    && System.nanoTime() < deadline) {
                Thread.sleep(20);
            }
            assertEquals(0, node.counters().get(NodeCounter.MESSAGES_MALFORMED));
            assertEquals(1, c.get(NodeCounter.PACKETS_UDP));
            assertEquals(n, c.get(NodeCounter.EVENTS_RECEIVED));
        }
    }
}
