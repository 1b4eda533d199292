package dev.afterglow.node.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingWriter;
import java.io.IOException;
import java.io.StringReader;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Replay without a network: what is sent, from where, in how many passes, with which times. */
class ReplayerTest {
    @TempDir
    Path dir;

    /** 400 events, one per ms from 1 s, imported as 1 ms packets. */
    private Path recording() throws IOException {
        StringBuilder list = new StringBuilder();
        for (int i = 0; i < 400; i++) {
            list.append(1_000_000 + 1_000L * i).append(',').append(i % 10).append(',').append(i % 7).append(",1\n");
        }
        new EventListImport(EventTable.parse("t,x,y,p", "comma", "us", "1/0"),
                SensorHello.newBuilder().setSensorId("r").setWidth(10).setHeight(7).build(), 1_000, false)
                .run(new StringReader(list.toString()), dir, "r", RecordingWriter.Settings.keepAll(), 0);
        return dir;
    }

    private static List<Envelope> play(Replayer replayer) throws IOException {
        List<Envelope> sent = new ArrayList<>();
        replayer.run(new Replayer.Target() {
            @Override
            public void send(Envelope envelope) {
                sent.add(envelope);
            }

            @Override
            public void flush() {
            }
        });
        return sent;
    }

    @Test
    void shouldStartAtTheGivenSensorTime() throws IOException {
        List<Envelope> sent = play(new Replayer(recording(), 0, 1_150_000, 1));
        assertEquals(250, sent.size(), "packets from 1.15 s to 1.399 s");
        assertEquals(1_150_000, sent.get(0).getEvents().getTimeBaseUs());
        assertTrue(sent.stream().noneMatch(Envelope::hasHello), "the hello goes with the connection, not again");
    }

    @Test
    void shouldShiftTimeAndSequenceOnEachPass() throws IOException {
        List<Envelope> sent = play(new Replayer(recording(), 0, 0, 2));
        assertEquals(800, sent.size());
        // the span is 1.000 .. 1.399 s; the second pass starts 1 ms after it ended
        assertEquals(1_000_000 + 399_000 + 1_000, sent.get(400).getEvents().getTimeBaseUs());
        assertEquals(400, sent.get(400).getEvents().getSequence());
        assertEquals(sent.get(0).getEvents().getEvents(), sent.get(400).getEvents().getEvents(), "same records");
    }

    @Test
    void shouldRefuseNonsense() {
        assertThrows(IllegalArgumentException.class, () -> new Replayer(dir, -1, 0, 1));
        assertThrows(IllegalArgumentException.class, () -> new Replayer(dir, 1, 0, 0));
    }
}
