package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * Two sensors in one node; subscribers choose rate (decimation), format, region and downscale; a
 * sensor that disconnects and reconnects resumes where it left off.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class SubscriptionOptionsTest {

    @Test
    void shouldDecimateCropDownscaleAndResumeAfterReconnect() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                sensors:
                  - {id: a, width: 64, height: 48, frame-rate-hz: 100, latency-budget-ms: 5000}
                  - {id: b, width: 32, height: 32, frame-rate-hz: 40, latency-budget-ms: 5000}
                """, "test");
        List<EventBatch> scene = SceneEvents.packets(64, 48, 1_500_000, 1_000, 21);
        List<EventBatch> sceneB = SceneEvents.packets(32, 32, 1_500_000, 1_000, 22);
        try (AfterglowNode node = AfterglowNode.start(config);
                SubscriberClient decimated = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "a", 25,
                        PixelFormat.PIXEL_FORMAT_GRAY8);
                SubscriberClient full = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "a", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32);
                SubscriberClient region = SubscriberClient.connect("127.0.0.1", node.subscriberPort(),
                        SubscriberClient.request("a", 0, PixelFormat.PIXEL_FORMAT_LOG_F32, 8, 4, 32, 16, 2));
                SubscriberClient other = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "b", 0,
                        PixelFormat.PIXEL_FORMAT_GRAY8)) {
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 4);
            for (SubscriberClient c : List.of(decimated, full, region, other)) {
                c.setTimeoutMillis(20_000);
            }
            SensorPipeline pipelineA = node.sensors().get("a");
            Thread senderB = new Thread(() -> stream("b", 32, 32, node.ingestTcpPort(), sceneB, 0, sceneB.size()));
            senderB.start();
            // Sensor a streams the first half, disconnects, reconnects and streams the rest.
            int half = scene.size() / 2;
            stream("a", 64, 48, node.ingestTcpPort(), scene, 0, half);
            stream("a", 64, 48, node.ingestTcpPort(), scene, half, scene.size());
            senderB.join(20_000);
            assertSame(pipelineA, node.sensors().get("a"), "the reconnected sensor kept its pipeline and state");

            int frames = 140; // a's frames at 10 ms .. 1.4 s
            Map<Long, float[]> fullBySeq = new HashMap<>();
            for (int i = 1; i <= frames; i++) {
                IntensityFrame f = full.next();
                assertEquals(i, f.getSequence(), "no frame lost across the reconnect");
                assertEquals(10_000L * i, f.getFrameTimeUs());
                fullBySeq.put(f.getSequence(), floats(f));
            }
            for (int i = 1; i <= frames; i++) {
                IntensityFrame r = region.next();
                assertEquals(16, r.getWidth());
                assertEquals(8, r.getHeight());
                assertEquals(2, r.getDownscale());
                float[] crop = floats(r);
                float[] whole = fullBySeq.get(r.getSequence());
                for (int y = 0; y < 8; y++) {
                    for (int x = 0; x < 16; x++) {
                        float sum = 0;
                        for (int dy = 0; dy < 2; dy++) {
                            for (int dx = 0; dx < 2; dx++) {
                                sum += whole[(4 + 2 * y + dy) * 64 + 8 + 2 * x + dx];
                            }
                        }
                        assertEquals(sum * 0.25f, crop[y * 16 + x], 1e-6f, "box average of the 2x2 block");
                    }
                }
            }
            long previous = 0;
            for (int i = 0; i < frames / 4; i++) {
                IntensityFrame d = decimated.next();
                assertEquals(PixelFormat.PIXEL_FORMAT_GRAY8, d.getFormat());
                assertEquals(64 * 48, d.getPixels().size());
                if (previous > 0) {
                    assertEquals(40_000, d.getFrameTimeUs() - previous, "25 Hz from 100 Hz: every 4th frame");
                }
                previous = d.getFrameTimeUs();
            }
            for (int i = 1; i <= 50; i++) {
                IntensityFrame b = other.next();
                assertEquals("b", b.getSensorId());
                assertEquals(i, b.getSequence());
                assertEquals(25_000L * i, b.getFrameTimeUs(), "sensor b runs at its own 40 Hz");
            }
        }
    }

    @Test
    void shouldRefuseBadSubscriptions() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                sensors: [{id: a, width: 64, height: 48}]
                """, "test");
        try (AfterglowNode node = AfterglowNode.start(config)) {
            assertEquals("unknown-sensor", refusal(node, SubscriberClient.request("zz", 0, PixelFormat.PIXEL_FORMAT_GRAY8, 0, 0, 0, 0, 1)));
            assertEquals("bad-subscribe", refusal(node, SubscriberClient.request("a", 0, PixelFormat.PIXEL_FORMAT_GRAY8, 40, 0, 30, 10, 1)));
            assertEquals("bad-subscribe", refusal(node, SubscriberClient.request("a", 0, PixelFormat.PIXEL_FORMAT_GRAY8, 0, 0, 0, 0, 17)));
            assertEquals("bad-subscribe", refusal(node, SubscriberClient.request("a", 5000, PixelFormat.PIXEL_FORMAT_GRAY8, 0, 0, 0, 0, 1)));
        }
    }

    private static String refusal(AfterglowNode node, dev.afterglow.proto.v1.Subscribe request) throws Exception {
        try (SubscriberClient c = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), request)) {
            c.setTimeoutMillis(5_000);
            return assertThrows(SubscriberClient.RefusedException.class, c::next).code();
        }
    }

    private static void stream(String id, int w, int h, int port, List<EventBatch> packets, int from, int to) {
        try (SensorClient s = SensorClient.connect("127.0.0.1", port, id, w, h, false)) {
            long start = System.nanoTime() - packets.get(from).timeBaseUs * 1000;
            for (int i = from; i < to; i++) {
                StreamingEndToEndTest.paceRealTime(start, packets.get(i).timeBaseUs + 1_000);
                s.sendEvents(packets.get(i));
                s.flush();
            }
        } catch (Exception e) {
            throw new AssertionError(e);
        }
    }

    private static float[] floats(IntensityFrame f) {
        float[] out = new float[f.getWidth() * f.getHeight()];
        ByteBuffer.wrap(f.getPixels().toByteArray()).order(ByteOrder.LITTLE_ENDIAN).asFloatBuffer().get(out);
        assertTrue(out.length > 0);
        return out;
    }
}
