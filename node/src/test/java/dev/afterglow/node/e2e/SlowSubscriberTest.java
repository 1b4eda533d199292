package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.publish.Subscription;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Subscribe;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/** A subscriber that stops reading misses frames (counted) while a fast one on the same sensor gets every frame. */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class SlowSubscriberTest {

    @Test
    void shouldLetSlowSubscriberMissFramesWithoutSlowingOthers() throws Exception {
        int w = 320;
        int h = 240;
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                limits: {subscriber-high-water-bytes: 2097152}
                sensors:
                  - {id: cam, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 10000,
                     chain: "background-activity(window=10ms) | high-pass(cutoff=3rad/s)"}
                """.formatted(w, h), "test");
        List<EventBatch> packets = SceneEvents.packets(w, h, 2_000_000, 2_000, 5);
        try (AfterglowNode node = AfterglowNode.start(config);
                Socket stalled = new Socket();
                SubscriberClient fast = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "cam", 0,
                        PixelFormat.PIXEL_FORMAT_GRAY8)) {
            // The stalled subscriber asks for 300 KB frames and never reads a byte.
            stalled.setReceiveBufferSize(4096);
            stalled.connect(new InetSocketAddress("127.0.0.1", node.subscriberPort()));
            Envelope.newBuilder().setSchemaVersion(1).setSubscribe(Subscribe.newBuilder().setSensorId("cam")
                    .setFormat(PixelFormat.PIXEL_FORMAT_LOG_F32)).build().writeDelimitedTo(stalled.getOutputStream());
            stalled.getOutputStream().flush();
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 2);
            fast.setTimeoutMillis(20_000);

            Thread sender = new Thread(() -> {
                try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "cam", w, h, false)) {
                    long start = System.nanoTime();
                    for (EventBatch b : packets) {
                        long wait = start + (b.timeBaseUs + 2_000) * 1000 - System.nanoTime();
                        if (wait > 0) {
                            TimeUnit.NANOSECONDS.sleep(wait); // real time, as a sensor would
                        }
                        sensor.sendEvents(b);
                        sensor.flush();
                    }
                } catch (Exception e) {
                    throw new RuntimeException(e);
                }
            });
            sender.start();
            long lastEventUs = packets.get(packets.size() - 1).timeUs(packets.get(packets.size() - 1).size - 1);
            int expected = (int) (lastEventUs / 10_000);
            for (int i = 1; i <= expected; i++) {
                IntensityFrame f = fast.next();
                assertEquals(i, f.getSequence(), "the fast subscriber receives every frame in order");
                assertEquals(10_000L * i, f.getFrameTimeUs());
            }
            sender.join(10_000);

            var counters = node.sensors().get("cam").counters();
            Subscription slow = null;
            Subscription quick = null;
            for (Subscription s : node.publisher().subscriptions("cam")) {
                if (((InetSocketAddress) s.channel().remoteAddress()).getPort() == stalled.getLocalPort()) {
                    slow = s;
                } else {
                    quick = s;
                }
            }
            long published = counters.get(NodeCounter.FRAMES_PUBLISHED); // may include one idle frame at the end
            assertTrue(published >= expected, published + " published");
            assertEquals(0, quick.missed(), "fast subscriber missed nothing");
            assertEquals(published, quick.delivered());
            assertTrue(slow.missed() > expected / 2, "stalled subscriber missed " + slow.missed() + " of " + expected);
            assertEquals(published, slow.missed() + slow.delivered());
            assertEquals(slow.missed(), counters.get(NodeCounter.FRAMES_MISSED));
        }
    }
}
