package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.google.protobuf.ByteString;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.node.config.ToneMapText;
import dev.afterglow.node.recording.OfflineRenderer;
import dev.afterglow.node.recording.Replayer;
import dev.afterglow.recording.RecordingReader;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingWriter;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * A recording replayed into the real node on loopback as a sensor: the frames equal, bit for bit,
 * the same chain run in this process on the recorded packets and the offline render of the
 * recording; played again, the node sees one
 * continuous sensor (no clock restart) and every event of both passes.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class ReplayEndToEndTest {
    private static final String CHAIN = "refractory(period=100us) | high-pass(cutoff=5rad/s, contrast=0.2)";
    @TempDir
    Path dir;

    private static NodeConfig config() {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: -1}
                sensors:
                  - {id: bench, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 5000, chain: '%s'}
                """.formatted(StreamingEndToEndTest.W, StreamingEndToEndTest.H, CHAIN), "test");
    }

    /** Records the packets as a sensor would have sent them, each arriving 1 ms after its time base. */
    private Path record(List<EventBatch> packets) throws IOException {
        Path folder = dir.resolve("rec");
        SensorHello hello = SensorClient.hello("bench", StreamingEndToEndTest.W, StreamingEndToEndTest.H, false, "");
        try (RecordingWriter w = RecordingWriter.create(folder, "bench", hello, "test", 0, RecordingWriter.Settings.keepAll())) {
            w.write(0, Envelope.newBuilder().setSchemaVersion(1).setHello(hello).build());
            long seq = 0;
            for (EventBatch b : packets) {
                w.write(b.timeBaseUs + 1_000, Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                        .setSequence(seq++).setTimeBaseUs(b.timeBaseUs).setEventCount(b.size)
                        .setEvents(ByteString.copyFrom(EventPacketCodec.encode(b)))).build());
            }
        }
        return folder;
    }

    @Test
    void shouldPublishTheFramesOfTheRecordedPacketsBitForBit() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(StreamingEndToEndTest.W, StreamingEndToEndTest.H, 600_000, 1_000, 23);
        Path recording = record(packets);
        try (AfterglowNode node = AfterglowNode.start(config());
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "bench", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32)) {
            sub.setTimeoutMillis(20_000);
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            Replayer.Result r;
            try (SensorClient c = SensorClient.connect("127.0.0.1", node.ingestTcpPort(),
                    SensorClient.hello("bench", StreamingEndToEndTest.W, StreamingEndToEndTest.H, false, ""))) {
                r = new Replayer(recording, 1, 0, 1).run(Replayer.Target.of(c));
            }
            long events = packets.stream().mapToLong(b -> b.size).sum();
            assertEquals(events, r.events());
            assertEquals(packets.size(), r.envelopes(), "one envelope per recorded packet");
            assertTrue(r.seconds() > 0.55, "at the recorded pace: " + r.seconds() + " s");
            long lastEventUs = packets.get(packets.size() - 1).timeUs(packets.get(packets.size() - 1).size - 1);
            List<IntensityFrame> frames = new ArrayList<>();
            for (int i = 0; i < lastEventUs / 10_000; i++) {
                frames.add(sub.next());
            }
            StreamingEndToEndTest.assertEqualToInProcessChain(CHAIN, packets, frames);
            StreamingEndToEndTest.waitFor(() -> node.sensors().get("bench").counters().get(NodeCounter.EVENTS_TCP) == events);
            assertRenderedOfflineAsPublished(recording, frames);
        }
    }

    /** The offline renderer on the same recording, chain and rate gives the frames the node published, bit for bit. */
    private static void assertRenderedOfflineAsPublished(Path recording, List<IntensityFrame> published) throws IOException {
        List<float[]> rendered = new ArrayList<>();
        List<Long> times = new ArrayList<>();
        try (Chain chain = Chain.build(CHAIN, StreamingEndToEndTest.W, StreamingEndToEndTest.H);
                RecordingReader reader = RecordingReader.open(recording)) {
            new OfflineRenderer(chain, StreamingEndToEndTest.W, StreamingEndToEndTest.H, 100,
                    new ToneMapper(ToneMapText.parse("tone-map", "percentile 1 99"))).run(reader, (index, timeUs, log, gray, facts) -> {
                        rendered.add(log.clone());
                        times.add(timeUs);
                    }, t -> { });
        }
        assertTrue(rendered.size() >= published.size(), rendered.size() + " rendered, " + published.size() + " published");
        for (int f = 0; f < published.size(); f++) {
            IntensityFrame frame = published.get(f);
            assertEquals(frame.getFrameTimeUs(), times.get(f), "frame " + f + " time");
            ByteBuffer px = frame.getPixels().asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN);
            for (int i = 0; i < rendered.get(f).length; i++) {
                assertEquals(Float.floatToRawIntBits(px.getFloat(4 * i)), Float.floatToRawIntBits(rendered.get(f)[i]),
                        "frame " + f + " pixel " + i);
            }
        }
    }

    @Test
    void shouldPlayAgainAsOneContinuousSensor() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(StreamingEndToEndTest.W, StreamingEndToEndTest.H, 300_000, 1_000, 24);
        Path recording = record(packets);
        long events = packets.stream().mapToLong(b -> b.size).sum();
        try (AfterglowNode node = AfterglowNode.start(config())) {
            Replayer.Result r;
            try (SensorClient c = SensorClient.connect("127.0.0.1", node.ingestTcpPort(),
                    SensorClient.hello("bench", StreamingEndToEndTest.W, StreamingEndToEndTest.H, false, ""))) {
                r = new Replayer(recording, 2, 0, 3).run(Replayer.Target.of(c));
            }
            assertEquals(3 * events, r.events());
            assertTrue(r.seconds() > 0.4, "three passes of 0.3 s at twice the pace: " + r.seconds() + " s");
            var counters = node.sensors().get("bench").counters();
            StreamingEndToEndTest.waitFor(() -> counters.get(NodeCounter.EVENTS_TCP) == 3 * events);
            assertEquals(0, counters.get(NodeCounter.CLOCK_RESTARTS), "the clock runs on from pass to pass");
            assertEquals(0, counters.get(NodeCounter.PACKETS_PAST) + counters.get(NodeCounter.PACKETS_FUTURE));
        }
    }

    /**
     * As fast as the node takes it: with {@code overload: backpressure} the node stops reading the
     * replay's connection while its (small, here) queue is half taken, so nothing is shed; with the
     * default {@code shed}, the same replay loses packets to the full queue.
     */
    @Test
    void shouldLoseNothingAtFullSpeedIntoASensorWithBackpressure() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(StreamingEndToEndTest.W, StreamingEndToEndTest.H, 2_000_000, 200, 25);
        Path recording = record(packets);
        long events = packets.stream().mapToLong(b -> b.size).sum();
        for (String overload : List.of("backpressure", "shed")) {
            NodeConfig config = NodeConfig.parse("""
                    listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: -1, http-port: -1}
                    warm-up: false
                    limits: {max-pending-packets: 8, max-time-ahead-ms: 3600000}
                    sensors:
                      - {id: bench, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 10000, chain: '%s', overload: %s}
                    """.formatted(StreamingEndToEndTest.W, StreamingEndToEndTest.H, CHAIN, overload), "test");
            try (AfterglowNode node = AfterglowNode.start(config)) {
                try (SensorClient c = SensorClient.connect("127.0.0.1", node.ingestTcpPort(),
                        SensorClient.hello("bench", StreamingEndToEndTest.W, StreamingEndToEndTest.H, false, ""))) {
                    new Replayer(recording, 0, 0, 3).run(Replayer.Target.of(c));
                }
                var counters = node.sensors().get("bench").counters();
                StreamingEndToEndTest.waitFor(() -> counters.get(NodeCounter.EVENTS_TCP) == 3 * events
                        && node.sensors().get("bench").pendingPackets() == 0);
                long shed = counters.get(NodeCounter.EVENTS_SHED_QUEUE) + counters.get(NodeCounter.EVENTS_SHED_LATENCY);
                if (overload.equals("backpressure")) {
                    assertEquals(0, shed, "nothing shed");
                    assertEquals(3 * events, counters.get(NodeCounter.EVENTS_RECEIVED), "every event applied");
                    assertTrue(counters.get(NodeCounter.BACKPRESSURE_PAUSES) > 0, "the connection was paused");
                } else {
                    assertTrue(counters.get(NodeCounter.EVENTS_SHED_QUEUE) > 0, "a full queue sheds without backpressure");
                    assertEquals(0, counters.get(NodeCounter.BACKPRESSURE_PAUSES));
                }
            }
        }
    }
}
