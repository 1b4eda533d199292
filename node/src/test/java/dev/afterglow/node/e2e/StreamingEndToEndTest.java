package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * A synthetic scene streamed into a real node on loopback, over TCP and over UDP; a subscriber
 * receives every frame, frames are exactly one period apart in sensor time, and their pixels equal
 * the same chain run in-process on the same events, bit for bit.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class StreamingEndToEndTest {
    static final int W = 64;
    static final int H = 48;
    private static final String CHAIN = "refractory(period=1ms) | background-activity(window=10ms) | high-pass(cutoff=3rad/s, contrast=0.2)";

    static NodeConfig config(String sensorId, double rateHz, double budgetMs) {
        return NodeConfig.parse("""
                listen:
                  ingest-tcp-port: 0
                  ingest-udp-port: 0
                  subscriber-port: 0
                  http-port: 0
                sensors:
                  - id: %s
                    width: %d
                    height: %d
                    chain: "%s"
                    frame-rate-hz: %s
                    latency-budget-ms: %s
                """.formatted(sensorId, W, H, CHAIN, rateHz, budgetMs), "test");
    }

    @Test
    void shouldDeliverFramesOverTcpEqualToInProcessChain() throws Exception {
        runAndCompare(false);
    }

    @Test
    void shouldDeliverFramesOverUdpEqualToInProcessChain() throws Exception {
        runAndCompare(true);
    }

    private void runAndCompare(boolean udp) throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 600_000, 1_000, 11);
        try (AfterglowNode node = AfterglowNode.start(config("belt", 100, 5_000));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "belt", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32)) {
            sub.setTimeoutMillis(20_000);
            waitFor(() -> node.publisher().count() == 1);
            if (udp) {
                try (UdpSensorClient sensor = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), "belt")) {
                    long start = System.nanoTime();
                    for (EventBatch b : packets) {
                        paceRealTime(start, b.timeBaseUs + 1_000);
                        sensor.sendEvents(b);
                    }
                }
            } else {
                try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "belt", W, H, false)) {
                    long start = System.nanoTime();
                    for (EventBatch b : packets) {
                        paceRealTime(start, b.timeBaseUs + 1_000);
                        sensor.sendEvents(b);
                        sensor.flush();
                    }
                }
            }
            long lastEventUs = packets.get(packets.size() - 1).timeUs(packets.get(packets.size() - 1).size - 1);
            int expectedFrames = (int) (lastEventUs / 10_000); // frames at 10 ms, 20 ms, ... <= last event
            List<IntensityFrame> frames = new ArrayList<>();
            for (int i = 0; i < expectedFrames; i++) {
                try {
                    frames.add(sub.next());
                } catch (java.net.SocketTimeoutException e) {
                    throw new AssertionError("frame " + i + " of " + expectedFrames + " not received; sensor counters: "
                            + describe(node), e);
                }
            }

            for (int f = 0; f < frames.size(); f++) {
                assertEquals(10_000L * (f + 1), frames.get(f).getFrameTimeUs(), "frame " + f + " time");
                assertEquals(f + 1, frames.get(f).getSequence());
            }
            assertEqualToInProcessChain(CHAIN, packets, frames);
            var counters = node.sensors().get("belt").counters();
            assertEquals(0, counters.get(NodeCounter.PACKETS_SHED_LATENCY));
            assertEquals(0, counters.get(NodeCounter.PACKETS_SHED_QUEUE));
            assertEquals(0, counters.get(NodeCounter.EVENTS_LATE));
            long sent = packets.stream().mapToLong(b -> b.size).sum();
            // The last packets may still be on their way through the pipeline after the last frame.
            waitFor(() -> counters.get(NodeCounter.EVENTS_RECEIVED) == sent);
            if (udp) {
                assertEquals(0, counters.get(NodeCounter.UDP_LOST));
                assertTrue(counters.get(NodeCounter.PACKETS_UDP) >= packets.size());
                // Every event offered lands in exactly one outcome (loopback may duplicate nothing; rejected covers it if it did).
                assertEquals(counters.get(NodeCounter.EVENTS_UDP), counters.get(NodeCounter.EVENTS_RECEIVED)
                        + counters.get(NodeCounter.EVENTS_REJECTED));
            } else {
                assertEquals(packets.size(), counters.get(NodeCounter.PACKETS_TCP));
                assertEquals(sent, counters.get(NodeCounter.EVENTS_TCP));
                assertEquals(0, counters.get(NodeCounter.EVENTS_UDP));
            }
            assertEquals(0, counters.get(NodeCounter.FRAMES_UNREAD));
        }
    }

    @Test
    void shouldSkipReadoutWhileNobodySubscribesAndStayExactAfterwards() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 600_000, 1_000, 13);
        long subscribeAtUs = 300_000;
        try (AfterglowNode node = AfterglowNode.start(config("belt", 100, 5_000));
                SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "belt", W, H, false)) {
            var counters = node.sensors().get("belt").counters();
            SubscriberClient sub = null;
            try {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    if (sub == null && b.timeBaseUs >= subscribeAtUs) {
                        // Frames up to here passed unread; nobody was listening.
                        waitFor(() -> counters.get(NodeCounter.FRAMES_UNREAD) >= 25);
                        sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "belt", 0, PixelFormat.PIXEL_FORMAT_LOG_F32);
                        sub.setTimeoutMillis(20_000);
                        waitFor(() -> node.publisher().count() == 1);
                        start = System.nanoTime() - b.timeBaseUs * 1000;
                    }
                    paceRealTime(start, b.timeBaseUs + 1_000);
                    sensor.sendEvents(b);
                    sensor.flush();
                }
                List<IntensityFrame> frames = new ArrayList<>();
                for (int i = 0; i < 20; i++) {
                    frames.add(sub.next());
                }
                long unread = counters.get(NodeCounter.FRAMES_UNREAD);
                assertTrue(unread >= 25 && unread <= 32, "unread " + unread);
                for (int f = 0; f < frames.size(); f++) {
                    // The grid continues; published frames are numbered from 1.
                    assertEquals(10_000L * (unread + f + 1), frames.get(f).getFrameTimeUs(), "frame " + f + " time");
                    assertEquals(f + 1, frames.get(f).getSequence());
                }
                // Bit for bit what a chain that was read out at every frame gives: skipping readouts changes nothing.
                assertEqualToInProcessChain(CHAIN, packets, frames);
            } finally {
                if (sub != null) {
                    sub.close();
                }
            }
        }
    }

    /**
     * Checks each frame's float pixels bit for bit against the same chain run in this process over
     * the same packets, with the events before the frame's time applied and read out at that time.
     */
    static void assertEqualToInProcessChain(String chain, List<EventBatch> packets, List<IntensityFrame> frames) {
        try (Chain reference = Chain.build(chain, W, H)) {
            assertEqualToInProcessChain(reference, packets, frames);
        }
    }

    private static void assertEqualToInProcessChain(Chain reference, List<EventBatch> packets, List<IntensityFrame> frames) {
        float[] expected = new float[W * H];
        int packetIndex = 0;
        int eventIndex = 0;
        EventBatch one = new EventBatch(1 << 16);
        for (int f = 0; f < frames.size(); f++) {
            IntensityFrame frame = frames.get(f);
            long t = frame.getFrameTimeUs();
            one.reset(packets.get(Math.min(packetIndex, packets.size() - 1)).timeBaseUs);
            while (packetIndex < packets.size()) {
                EventBatch p = packets.get(packetIndex);
                if (eventIndex == p.size) {
                    packetIndex++;
                    eventIndex = 0;
                    continue;
                }
                if (p.timeUs(eventIndex) >= t) {
                    break;
                }
                if (one.size == one.capacity() || p.timeUs(eventIndex) - one.timeBaseUs >= EventBatch.MAX_OFFSET_US) {
                    reference.process(one);
                    one.reset(p.timeUs(eventIndex));
                }
                one.add(p.x[eventIndex], p.y[eventIndex], p.timeUs(eventIndex), p.p[eventIndex]);
                eventIndex++;
            }
            reference.process(one);
            reference.reconstruction().readLog(t, expected);
            assertEquals(W, frame.getWidth());
            assertEquals(H, frame.getHeight());
            ByteBuffer px = frame.getPixels().asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN);
            for (int i = 0; i < W * H; i++) {
                float got = px.getFloat(4 * i);
                if (Float.floatToRawIntBits(got) != Float.floatToRawIntBits(expected[i])) {
                    throw new AssertionError("frame " + f + " pixel " + i + ": node " + got + " != in-process " + expected[i]);
                }
            }
            assertTrue(frame.getProvenance().getEventsApplied() >= 0);
        }
    }

    /** Sleeps until {@code sensorUs} of sensor time have passed since {@code startNanos}: a sensor streams in real time. */
    static void paceRealTime(long startNanos, long sensorUs) throws InterruptedException {
        SceneEvents.paceRealTime(startNanos, sensorUs);
    }

    static String describe(AfterglowNode node) {
        StringBuilder b = new StringBuilder();
        for (var p : node.sensors().all()) {
            for (NodeCounter c : NodeCounter.values()) {
                long v = c.scope() == NodeCounter.Scope.SENSOR ? p.counters().get(c) : node.counters().get(c);
                if (v != 0) {
                    b.append(c).append('=').append(v).append(' ');
                }
            }
        }
        return b.toString();
    }

    static void waitFor(java.util.function.BooleanSupplier condition) throws InterruptedException {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(10);
        while (!condition.getAsBoolean()) {
            if (System.nanoTime() > deadline) {
                throw new AssertionError("condition not met within 10 s");
            }
            Thread.sleep(5);
        }
    }
}
