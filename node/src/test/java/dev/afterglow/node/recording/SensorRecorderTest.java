package dev.afterglow.node.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.config.RecordConfig;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingReader;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The recorder on its own: ids from the wire stay inside the folder, a full queue drops and counts, nothing before a hello. */
class SensorRecorderTest {
    @TempDir
    Path dir;

    private RecordConfig config(double queueMb) {
        RecordConfig c = new RecordConfig();
        c.folder = dir.resolve("recordings").toString();
        c.queueMb = queueMb;
        c.flushMs = 0;
        return c;
    }

    @Test
    void shouldKeepIdsMadeOfDotsInsideTheFolder() throws Exception {
        assertEquals("_..", SensorRecorder.fileName(".."));
        assertEquals("_.", SensorRecorder.fileName("."));
        assertEquals("cam_1", SensorRecorder.fileName("cam:1"));
        assertEquals("a..b", SensorRecorder.fileName("a..b"));
        Counters counters = new Counters();
        SensorRecorder r = new SensorRecorder("..", config(64), counters);
        r.start(SensorHello.newBuilder().setSensorId("..").setWidth(4).setHeight(4).build(), System.nanoTime());
        r.close();
        assertTrue(Files.isDirectory(dir.resolve("recordings/_..")), "recorded under recordings/_..");
        try (var files = Files.list(dir)) {
            assertEquals(1, files.count(), "nothing written beside the recordings folder");
        }
        try (RecordingReader reader = RecordingReader.open(dir.resolve("recordings/_.."))) {
            assertEquals("..", reader.header().getHello().getSensorId());
        }
    }

    @Test
    void shouldDropAndCountWhatDoesNotFitTheQueueOrComesBeforeTheHello() {
        Counters counters = new Counters();
        SensorRecorder r = new SensorRecorder("cam", config(1), counters);
        Envelope big = Envelope.newBuilder().setEvents(EventPacket.newBuilder()
                .setEvents(com.google.protobuf.ByteString.copyFrom(new byte[600 * 1024]))).build();
        r.offer(System.nanoTime(), big);
        assertEquals(1, counters.get(NodeCounter.RECORDING_DROPPED), "before the hello: nothing to record into");
        r.start(SensorHello.newBuilder().setSensorId("cam").setWidth(4).setHeight(4).build(), System.nanoTime());
        Envelope tooBig = Envelope.newBuilder().setEvents(EventPacket.newBuilder()
                .setEvents(com.google.protobuf.ByteString.copyFrom(new byte[2 << 20]))).build();
        r.offer(System.nanoTime(), tooBig);
        assertEquals(2, counters.get(NodeCounter.RECORDING_DROPPED), "larger than the 1 MB queue");
        r.close();
        assertEquals(1, counters.get(NodeCounter.RECORDED_MESSAGES), "the hello");
    }
}
