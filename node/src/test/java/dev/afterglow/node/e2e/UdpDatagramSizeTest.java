package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * UDP ingest takes whole datagrams up to the largest the Java client sends, not only small ones:
 * a 320x240 scene already puts about 3 kB of events into a 1 ms packet.
 */
@Timeout(value = 30, unit = TimeUnit.SECONDS)
class UdpDatagramSizeTest {

    @Test
    void shouldAcceptDatagramsUpToTheClientsLargest() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: 0, subscriber-port: -1, http-port: -1}
                sensors:
                  - {id: yard, width: 640, height: 480, frame-rate-hz: 50, latency-budget-ms: 5000}
                """, "test");
        // 8 bytes per event: datagrams of about 0.8, 8, 32 and 64 kB. IPv4 caps a UDP payload at
        // 65,535 - 20 (IP header) - 8 (UDP header) = 65,507 bytes (RFC 791, RFC 768); the client stays under it.
        int[] sizes = {100, 1_000, 4_000, UdpSensorClient.MAX_EVENTS_PER_DATAGRAM};
        try (AfterglowNode node = AfterglowNode.start(config);
                UdpSensorClient sensor = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), "yard")) {
            long eventsSent = 0;
            for (int k = 0; k < sizes.length; k++) {
                EventBatch b = new EventBatch(sizes[k]);
                long base = k * 1_000L;
                b.reset(base);
                for (int i = 0; i < sizes[k]; i++) {
                    b.add(i % 640, (i / 640) % 480, base + i % 1_000, (i & 1) == 0 ? 1 : -1);
                }
                sensor.sendEvents(b);
                eventsSent += sizes[k];
            }
            var counters = node.sensors().get("yard").counters();
            long expected = eventsSent;
            StreamingEndToEndTest.waitFor(() -> counters.get(NodeCounter.PACKETS_UDP) == sizes.length
                    || node.counters().get(NodeCounter.MESSAGES_MALFORMED) > 0);
            assertEquals(0, node.counters().get(NodeCounter.MESSAGES_MALFORMED), "datagrams read as malformed");
            assertEquals(sizes.length, counters.get(NodeCounter.PACKETS_UDP));
            StreamingEndToEndTest.waitFor(() -> counters.get(NodeCounter.EVENTS_RECEIVED) == expected);
        }
    }
}
