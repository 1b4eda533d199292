package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.ErrorReport;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Subscribe;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * Tokens and the duplicate-sensor policy against the real node: a wrong or missing token is
 * refused with a clear error report and counted, a second connection cannot take a connected
 * sensor over, sealed and unsealed datagrams are told apart, and the legitimate sensor and
 * subscriber carry on throughout.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class AccessEndToEndTest {
    private static final int W = 64;
    private static final int H = 48;
    private static final String CAM_TOKEN = "cam-token-0123456789";
    private static final String SUB_TOKEN = "subscriber-token-0123456789";

    private static NodeConfig config(String policy) {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: 0, subscriber-port: 0, http-port: 0}
                accept-unlisted-sensors: false
                access:
                  duplicate-sensor: %s
                  subscriber-tokens:
                    - {name: detector, token: "%s", sensors: [cam, open]}
                    - {name: other, token: "other-token-0123456789", sensors: [open]}
                sensors:
                  - {id: cam, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 5000, token: "%s"}
                  - {id: open, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 5000}
                  - {id: fenced, width: %d, height: %d, udp-from: ["10.0.0.0/8"]}
                """.formatted(policy, SUB_TOKEN, W, H, CAM_TOKEN, W, H, W, H), "test");
    }

    private static ErrorReport helloError(AfterglowNode node, String id, String token) throws Exception {
        try (SensorClient c = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), SensorClient.hello(id, W, H, false, token))) {
            return c.awaitError(5_000);
        }
    }

    private static String subscribeRefusal(AfterglowNode node, String sensor, String token) throws Exception {
        SubscriberClient.RefusedException e = assertThrows(SubscriberClient.RefusedException.class, () -> {
            try (SubscriberClient s = SubscriberClient.connect("127.0.0.1", node.subscriberPort(),
                    Subscribe.newBuilder().setSensorId(sensor).setToken(token).build())) {
                s.setTimeoutMillis(5_000);
                s.next();
            }
        });
        return e.getMessage(); // "code: message"
    }

    @Test
    void shouldRefuseWrongAndMissingTokensAndKeepTheRealSensorAndSubscriber() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 4_000_000, 1_000, 5);
        try (AfterglowNode node = AfterglowNode.start(config("refuse"));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(),
                        Subscribe.newBuilder().setSensorId("cam").setToken(SUB_TOKEN).setFormat(PixelFormat.PIXEL_FORMAT_GRAY8).build())) {
            Counters nodeCounters = node.counters();
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            sub.setTimeoutMillis(20_000);

            assertEquals("unauthorized", helloError(node, "cam", "").getCode(), "no token");
            assertEquals("unauthorized", helloError(node, "cam", "cam-token-0123456780").getCode(), "wrong token");
            assertEquals(2, nodeCounters.get(NodeCounter.AUTH_REFUSED));

            SensorClient real = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), SensorClient.hello("cam", W, H, false, CAM_TOKEN));
            try (PacedSender sender = new PacedSender(real, packets, 1_000)) {
                StreamingEndToEndTest.waitFor(() -> node.sensors().get("cam").counters().get(NodeCounter.EVENTS_RECEIVED) > 0);
                // A second connection for the connected sensor, even with the right token: refused under "refuse".
                ErrorReport dup = helloError(node, "cam", CAM_TOKEN);
                assertEquals("duplicate-sensor", dup.getCode());
                assertEquals(1, nodeCounters.get(NodeCounter.DUPLICATE_SENSOR));

                assertTrue(subscribeRefusal(node, "cam", "").startsWith("unauthorized: this node requires a subscriber token"));
                assertTrue(subscribeRefusal(node, "cam", "wrong-token-0123456789").startsWith("unauthorized: wrong subscriber token"));
                assertTrue(subscribeRefusal(node, "cam", "other-token-0123456789").startsWith("unauthorized: token other does not cover sensor cam"));
                assertEquals(5, nodeCounters.get(NodeCounter.AUTH_REFUSED));

                // The real subscriber sees frames on the grid, one period apart, all through.
                long previous = -1;
                for (int i = 0; i < 250; i++) {
                    IntensityFrame f = sub.next();
                    if (previous >= 0) {
                        assertEquals(10_000, f.getFrameTimeUs() - previous, "no frame missed");
                    }
                    previous = f.getFrameTimeUs();
                }
                assertNull(sender.finish(20_000));
            }
            assertEquals(0, nodeCounters.get(NodeCounter.INTERNAL_ERRORS));
        }
    }

    @Test
    void shouldLetAnAuthenticatedNewcomerReplaceUnderTheReplacePolicyOnly() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(config("replace"))) {
            SensorClient first = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), SensorClient.hello("cam", W, H, false, CAM_TOKEN));
            assertNull(first.awaitError(300));
            // "open" has no token: it can never be replaced while connected
            SensorClient open = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "open", W, H, false);
            assertNull(open.awaitError(300));
            assertEquals("duplicate-sensor", helloError(node, "open", "").getCode());
            try (SensorClient second = SensorClient.connect("127.0.0.1", node.ingestTcpPort(),
                    SensorClient.hello("cam", W, H, false, CAM_TOKEN))) {
                assertNull(second.awaitError(500), "the authenticated newcomer is accepted");
                // the old connection is closed by the node
                assertThrows(java.io.IOException.class, () -> {
                    for (int i = 0; i < 100; i++) {
                        first.sendEvents(SceneEvents.packets(W, H, 1_000, 1_000, 1).get(0));
                        first.flush();
                        Thread.sleep(20);
                    }
                });
            } finally {
                closeQuietly(first); // the node closed it: flushing may fail
                closeQuietly(open);
            }
        }
    }

    private static void closeQuietly(SensorClient c) {
        try {
            c.close();
        } catch (java.io.IOException e) {
            // already closed by the node
        }
    }

    @Test
    void shouldAcceptOnlySealedDatagramsForASensorWithAToken() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 100_000, 1_000, 7);
        long events = packets.stream().mapToLong(b -> b.size).sum();
        try (AfterglowNode node = AfterglowNode.start(config("refuse"));
                UdpSensorClient plain = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), "cam");
                UdpSensorClient forged = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), "cam", "not-the-token-0123456");
                UdpSensorClient sealed = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), "cam", CAM_TOKEN);
                UdpSensorClient fenced = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), "fenced")) {
            Counters nodeCounters = node.counters();
            Counters cam = node.sensors().get("cam").counters();
            plain.sendEvents(packets.get(0));
            forged.sendEvents(packets.get(0));
            fenced.sendEvents(packets.get(0)); // from loopback, outside its udp-from list
            StreamingEndToEndTest.waitFor(() -> nodeCounters.get(NodeCounter.UDP_REFUSED) == 3);
            assertEquals(0, cam.get(NodeCounter.PACKETS_UDP), "nothing refused reached the sensor");
            for (EventBatch b : packets) {
                sealed.sendEvents(b);
            }
            StreamingEndToEndTest.waitFor(() -> cam.get(NodeCounter.EVENTS_UDP) == events);
            assertNotNull(node.sensors().get("cam"));
            assertEquals(3, nodeCounters.get(NodeCounter.UDP_REFUSED));
        }
    }
}
