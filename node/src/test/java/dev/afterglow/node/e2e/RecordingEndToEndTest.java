package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.ToneMapText;
import dev.afterglow.node.recording.OfflineRenderer;
import dev.afterglow.node.recording.Replayer;
import dev.afterglow.node.recording.SensorRecorder;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.recording.RecordingReader;
import dev.afterglow.recording.RecordingWriter;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Recording in the live node: a sensor streamed in real time is recorded off the pipeline thread;
 * the recording, replayed into a second node and rendered offline, gives the frames the first node
 * published, bit for bit. A disk that fills up mid-recording stops the recording (counted, in the
 * status) and nothing else: frames keep coming.
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class RecordingEndToEndTest {
    private static final String CHAIN = "refractory(period=100us) | high-pass(cutoff=5rad/s, contrast=0.2)";
    private static final int W = StreamingEndToEndTest.W;
    private static final int H = StreamingEndToEndTest.H;
    @TempDir
    Path dir;

    private NodeConfig config(String record) {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: -1}
                sensors:
                  - {id: bench, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 5000, chain: '%s'%s}
                """.formatted(W, H, CHAIN, record == null ? "" : ", record: " + record), "test");
    }

    /** Streams the packets in real time into the node, reading {@code frames} frames from a subscriber. */
    private static List<IntensityFrame> stream(AfterglowNode node, List<EventBatch> packets, int frames,
            Runnable afterFirstSecond) throws Exception {
        try (SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "bench", 0,
                PixelFormat.PIXEL_FORMAT_LOG_F32)) {
            sub.setTimeoutMillis(20_000);
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "bench", W, H, false)) {
                long start = System.nanoTime();
                boolean called = false;
                for (EventBatch b : packets) {
                    StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 1_000);
                    sensor.sendEvents(b);
                    sensor.flush();
                    if (!called && b.timeBaseUs > 300_000) {
                        afterFirstSecond.run();
                        called = true;
                    }
                }
            }
            List<IntensityFrame> got = new ArrayList<>();
            for (int i = 0; i < frames; i++) {
                got.add(sub.next());
            }
            return got;
        }
    }

    @Test
    void shouldGiveTheLiveFramesAgainFromTheRecordingReplayedAndRenderedOffline() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 600_000, 1_000, 31);
        long lastEventUs = packets.get(packets.size() - 1).timeUs(packets.get(packets.size() - 1).size - 1);
        int frameCount = (int) (lastEventUs / 10_000);
        Path folder = dir.resolve("rec");
        List<IntensityFrame> live;
        try (AfterglowNode node = AfterglowNode.start(config("{folder: '" + folder + "', flush-ms: 100}"))) {
            live = stream(node, packets, frameCount, () -> { });
            var c = node.sensors().get("bench").counters();
            StreamingEndToEndTest.waitFor(() -> c.get(NodeCounter.RECORDED_MESSAGES) == packets.size() + 1);
            assertEquals(0, c.get(NodeCounter.RECORDING_DROPPED) + c.get(NodeCounter.RECORDING_FAILURES));
            assertEquals(0, c.get(NodeCounter.PACKETS_SHED_LATENCY) + c.get(NodeCounter.PACKETS_SHED_QUEUE), "nothing shed live");
        }
        Path recording = folder.resolve("bench");
        // 1. The recording holds the hello and every packet as sent.
        try (RecordingReader r = RecordingReader.open(recording)) {
            assertEquals("bench", r.header().getHello().getSensorId());
            assertEquals(SensorRecorder.WRITER, r.header().getWriter());
            assertTrue(r.next().envelope().hasHello());
            for (EventBatch b : packets) {
                Envelope e = r.next().envelope();
                assertEquals(b.timeBaseUs, e.getEvents().getTimeBaseUs());
                assertEquals(b.size, e.getEvents().getEventCount());
            }
            assertEquals(null, r.next());
            assertEquals(List.of(), r.problems());
        }
        // 2. Rendered offline: the live frames, bit for bit.
        List<float[]> rendered = new ArrayList<>();
        try (Chain chain = Chain.build(CHAIN, W, H); RecordingReader reader = RecordingReader.open(recording)) {
            new OfflineRenderer(chain, W, H, 100, new ToneMapper(ToneMapText.parse("tone-map", "percentile 1 99")))
                    .run(reader, (index, timeUs, log, gray, facts) -> rendered.add(log.clone()), t -> { });
        }
        assertSameFrames(live, rendered, "offline render");
        // 3. Replayed into a second node: the live frames again.
        List<IntensityFrame> replayed;
        try (AfterglowNode second = AfterglowNode.start(config(null));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", second.subscriberPort(), "bench", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32)) {
            sub.setTimeoutMillis(20_000);
            StreamingEndToEndTest.waitFor(() -> second.publisher().count() == 1);
            try (SensorClient c = SensorClient.connect("127.0.0.1", second.ingestTcpPort(), "bench", W, H, false)) {
                new Replayer(recording, 1, 0, 1).run(Replayer.Target.of(c));
            }
            replayed = new ArrayList<>();
            for (int i = 0; i < frameCount; i++) {
                replayed.add(sub.next());
            }
        }
        List<float[]> replayedPixels = new ArrayList<>();
        for (IntensityFrame f : replayed) {
            replayedPixels.add(pixels(f));
        }
        assertSameFrames(live, replayedPixels, "replay");
    }

    @Test
    void shouldStopOnlyTheRecordingWhenTheDiskIsFull() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 800_000, 1_000, 32);
        long lastEventUs = packets.get(packets.size() - 1).timeUs(packets.get(packets.size() - 1).size - 1);
        Path folder = dir.resolve("full");
        // 20 kB segments, a new one every few tens of milliseconds. After 0.3 s the next segment files are
        // made links to /dev/full, where every write fails with ENOSPC ("No space left on device"), as on a full disk.
        try (AfterglowNode node = AfterglowNode.start(config("{folder: '" + folder + "', segment-mb: 0.02, flush-ms: 0}"))) {
            SensorRecorder recorder = node.sensors().get("bench").recorder();
            Runnable fillTheDisk = () -> {
                try {
                    StreamingEndToEndTest.waitFor(() -> recorder.firstSegment() != null);
                    String first = recorder.firstSegment().getFileName().toString();
                    String stem = first.substring(0, first.length() - "000000.agrec".length());
                    int newest = 0;
                    try (var files = Files.list(folder.resolve("bench"))) {
                        for (Path p : files.toList()) {
                            String n = p.getFileName().toString();
                            newest = Math.max(newest, Integer.parseInt(n.substring(stem.length(), stem.length() + 6)));
                        }
                    }
                    for (int k = newest + 1; k <= newest + 200; k++) {
                        try {
                            Files.createSymbolicLink(folder.resolve("bench").resolve(RecordingWriter.segmentFileName(
                                    stem.substring(0, stem.length() - 1), k)), Path.of("/dev/full"));
                        } catch (java.nio.file.FileAlreadyExistsException raced) {
                            // the recorder opened it first: the next one fails
                        }
                    }
                } catch (IOException e) {
                    throw new java.io.UncheckedIOException(e);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                    throw new AssertionError(e);
                }
            };
            List<IntensityFrame> frames = stream(node, packets, (int) (lastEventUs / 10_000), fillTheDisk);
            assertTrue(frames.size() > 70, "frames all the way: " + frames.size());
            var c = node.sensors().get("bench").counters();
            long events = packets.stream().mapToLong(b -> b.size).sum();
            // The last frames can come before the node has read the last packet off the socket.
            StreamingEndToEndTest.waitFor(() -> c.get(NodeCounter.EVENTS_TCP) >= events);
            assertEquals(events, c.get(NodeCounter.EVENTS_TCP), "every event reached the node");
            assertEquals(1, c.get(NodeCounter.RECORDING_FAILURES), recorder.status());
            assertTrue(recorder.status().startsWith("failed: ") && recorder.status().contains("No space left on device"),
                    recorder.status());
            assertTrue(c.get(NodeCounter.RECORDING_DROPPED) > 0, "messages after the failure are counted as not recorded");
        }
    }

    private static float[] pixels(IntensityFrame f) {
        ByteBuffer px = f.getPixels().asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN);
        float[] out = new float[W * H];
        for (int i = 0; i < out.length; i++) {
            out[i] = px.getFloat(4 * i);
        }
        return out;
    }

    private static void assertSameFrames(List<IntensityFrame> live, List<float[]> other, String what) {
        assertTrue(other.size() >= live.size(), what + ": " + other.size() + " frames for " + live.size() + " live");
        for (int f = 0; f < live.size(); f++) {
            float[] a = pixels(live.get(f));
            for (int i = 0; i < a.length; i++) {
                if (Float.floatToRawIntBits(a[i]) != Float.floatToRawIntBits(other.get(f)[i])) {
                    throw new AssertionError(what + ": frame " + f + " pixel " + i + ": live " + a[i] + " != " + other.get(f)[i]);
                }
            }
        }
    }
}
