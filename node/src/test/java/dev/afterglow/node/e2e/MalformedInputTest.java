package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.google.protobuf.ByteString;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.SensorHello;
import java.io.DataInputStream;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.DatagramPacket;
import java.net.DatagramSocket;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicReference;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * Malformed input on one connection is counted and handled, and the node keeps serving a good
 * sensor and a subscriber on other connections the whole time.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class MalformedInputTest {
    private static final int W = 64;
    private static final int H = 48;

    @Test
    void shouldCountBadInputAndKeepServingOthers() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: 0, subscriber-port: 0, http-port: 0}
                limits: {max-message-bytes: 65536}
                accept-unlisted-sensors: false
                sensors:
                  - {id: good, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 5000}
                  - {id: quiet, width: %d, height: %d}
                """.formatted(W, H, W, H), "test");
        List<EventBatch> packets = SceneEvents.packets(W, H, 3_000_000, 1_000, 3);
        try (AfterglowNode node = AfterglowNode.start(config);
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "good", 0,
                        PixelFormat.PIXEL_FORMAT_GRAY8)) {
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            sub.setTimeoutMillis(20_000);
            AtomicReference<Exception> senderError = new AtomicReference<>();
            Thread sender = new Thread(() -> {
                try (SensorClient s = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "good", W, H, false)) {
                    long start = System.nanoTime();
                    for (EventBatch b : packets) {
                        long wait = start + (b.timeBaseUs + 1_000) * 1000 - System.nanoTime();
                        if (wait > 0) {
                            TimeUnit.NANOSECONDS.sleep(wait);
                        }
                        s.sendEvents(b);
                        s.flush();
                    }
                } catch (Exception e) {
                    senderError.set(e);
                }
            });
            sender.start();
            var nodeCounters = node.counters();
            int tcp = node.ingestTcpPort();

            // 1. Huge length prefix: refused with an error report, connection closed.
            try (Socket s = new Socket("127.0.0.1", tcp)) {
                OutputStream out = s.getOutputStream();
                out.write(new byte[] {(byte) 0x80, (byte) 0x80, (byte) 0x80, (byte) 0x80, 0x04}); // 2^30
                out.flush();
                assertEquals("oversized", readError(s.getInputStream()).getError().getCode());
                assertEquals(-1, s.getInputStream().read(), "connection closed");
            }
            StreamingEndToEndTest.waitFor(() -> nodeCounters.get(NodeCounter.MESSAGES_OVERSIZED) == 1);

            // 2. Garbage inside a valid length prefix: counted, the stream stays usable.
            try (Socket s = new Socket("127.0.0.1", tcp)) {
                OutputStream out = s.getOutputStream();
                out.write(new byte[] {5, (byte) 0xFF, (byte) 0xFF, (byte) 0xFF, (byte) 0xFF, (byte) 0xFF});
                // then events before any hello: a protocol error, answered and closed
                Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder().setEventCount(0))
                        .build().writeDelimitedTo(out);
                out.flush();
                assertEquals("protocol", readError(s.getInputStream()).getError().getCode());
            }
            StreamingEndToEndTest.waitFor(() -> nodeCounters.get(NodeCounter.MESSAGES_MALFORMED) == 1
                    && nodeCounters.get(NodeCounter.PROTOCOL_ERRORS) == 1);

            // 3. Truncated message: the stream ends inside a message.
            try (Socket s = new Socket("127.0.0.1", tcp)) {
                OutputStream out = s.getOutputStream();
                out.write(new byte[] {100, 1, 2, 3});
                out.flush();
            }
            StreamingEndToEndTest.waitFor(() -> nodeCounters.get(NodeCounter.STREAMS_TRUNCATED) == 1);

            // 4. Wrong geometry for a listed sensor, and an unlisted sensor: refused.
            assertEquals("geometry-mismatch", helloAndReadError(tcp, "good", W + 1, H));
            assertEquals("unknown-sensor", helloAndReadError(tcp, "stranger", W, H));
            assertEquals(1, nodeCounters.get(NodeCounter.GEOMETRY_MISMATCH));
            assertEquals(1, nodeCounters.get(NodeCounter.UNKNOWN_SENSOR));

            // 5. Garbage datagram, a datagram for an unknown sensor, a packet whose length does not match its count,
            //    and events outside the sensor (for the UDP sensor "quiet"), and a plain datagram for "good", which
            //    is connected over TCP: its connection vouches for its packets, so the datagram is refused.
            try (DatagramSocket udp = new DatagramSocket()) {
                InetSocketAddress to = new InetSocketAddress("127.0.0.1", node.ingestUdpPort());
                byte[] garbage = {(byte) 0xFF, 0x00, 0x13, 0x37, (byte) 0xFF};
                udp.send(new DatagramPacket(garbage, garbage.length, to));
                byte[] unknown = Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                        .setSensorId("ghost").setEventCount(0)).build().toByteArray();
                udp.send(new DatagramPacket(unknown, unknown.length, to));
                byte[] mismatch = Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                        .setSensorId("quiet").setSequence(0).setEventCount(3).setEvents(ByteString.copyFrom(new byte[16])))
                        .build().toByteArray();
                udp.send(new DatagramPacket(mismatch, mismatch.length, to));
                EventBatch outside = new EventBatch(2);
                outside.reset(0);
                outside.add(W + 5, 0, 0, 1);
                outside.add(0, H + 5, 0, -1);
                byte[] outOfRange = Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                        .setSensorId("quiet").setSequence(1).setTimeBaseUs(outside.timeBaseUs).setEventCount(2)
                        .setEvents(ByteString.copyFrom(dev.afterglow.filters.codec.EventPacketCodec.encode(outside))))
                        .build().toByteArray();
                udp.send(new DatagramPacket(outOfRange, outOfRange.length, to));
                byte[] forGood = Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                        .setSensorId("good").setSequence(0).setTimeBaseUs(0).setEventCount(2)
                        .setEvents(ByteString.copyFrom(dev.afterglow.filters.codec.EventPacketCodec.encode(outside))))
                        .build().toByteArray();
                udp.send(new DatagramPacket(forGood, forGood.length, to));
            }
            var quiet = node.sensors().get("quiet").counters();
            StreamingEndToEndTest.waitFor(() -> nodeCounters.get(NodeCounter.MESSAGES_MALFORMED) == 2
                    && nodeCounters.get(NodeCounter.UNKNOWN_SENSOR) == 2
                    && nodeCounters.get(NodeCounter.UDP_REFUSED) == 1
                    && quiet.get(NodeCounter.PACKETS_MALFORMED) == 1
                    && quiet.get(NodeCounter.EVENTS_OUTSIDE_SENSOR) == 2);
            assertEquals(0, node.sensors().get("good").counters().get(NodeCounter.PACKETS_UDP), "nothing of the datagram reached good");

            // Meanwhile the good sensor's frames kept coming, in order, one period apart.
            long previous = 0;
            for (int i = 0; i < 150; i++) {
                IntensityFrame f = sub.next();
                assertTrue(f.getFrameTimeUs() > previous);
                previous = f.getFrameTimeUs();
            }
            sender.join(20_000);
            assertEquals(null, senderError.get());
            assertEquals(0, nodeCounters.get(NodeCounter.INTERNAL_ERRORS));
        }
    }

    private static String helloAndReadError(int port, String id, int w, int h) throws Exception {
        try (Socket s = new Socket("127.0.0.1", port)) {
            Envelope.newBuilder().setSchemaVersion(1).setHello(SensorHello.newBuilder().setSensorId(id).setWidth(w).setHeight(h))
                    .build().writeDelimitedTo(s.getOutputStream());
            s.getOutputStream().flush();
            return readError(s.getInputStream()).getError().getCode();
        }
    }

    private static Envelope readError(InputStream in) throws Exception {
        Envelope e = Envelope.parseDelimitedFrom(new DataInputStream(in));
        assertTrue(e != null && e.hasError(), "expected an error report, got " + e);
        return e;
    }
}
