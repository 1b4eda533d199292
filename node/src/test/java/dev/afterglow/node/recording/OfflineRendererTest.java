package dev.afterglow.node.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.google.protobuf.ByteString;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingReader;
import dev.afterglow.recording.RecordingWriter;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The offline renderer treats the counts in a recording as hostile: a packet whose count does not match its bytes is dropped and counted, not allocated for. */
class OfflineRendererTest {
    @TempDir
    Path dir;

    private static Envelope packet(long seq, long baseUs, int declaredCount, int records) {
        ByteBuffer b = ByteBuffer.allocate(8 * records).order(ByteOrder.LITTLE_ENDIAN);
        for (int i = 0; i < records; i++) {
            b.putInt(10 * i).putShort((short) (i % 8)).putShort((short) ((i % 6) | (i % 2 == 0 ? 0x8000 : 0)));
        }
        return Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder().setSequence(seq)
                .setTimeBaseUs(baseUs).setEventCount(declaredCount).setEvents(ByteString.copyFrom(b.array()))).build();
    }

    @Test
    void shouldDropPacketsWhoseCountLiesAndRenderTheRest() throws Exception {
        SensorHello hello = SensorHello.newBuilder().setSensorId("x").setWidth(8).setHeight(6).build();
        try (RecordingWriter w = RecordingWriter.create(dir, "x", hello, "test", 0, RecordingWriter.Settings.keepAll())) {
            w.write(0, Envelope.newBuilder().setSchemaVersion(1).setHello(hello).build());
            w.write(1, packet(0, 1_000, 1 << 30, 1));  // a billion events claimed, one record sent
            w.write(2, packet(1, 2_000, 2, 1));        // two claimed, one sent
            w.write(3, packet(2, 3_000, -1, 1));       // 2^32 - 1 on the wire (uint32)
            for (int k = 0; k < 50; k++) {
                w.write(10 + k, packet(3 + k, 10_000 + 1_000L * k, 40, 40));
            }
        }
        long[] dropped = {0};
        int[] frames = {0};
        try (Chain chain = Chain.build("high-pass", 8, 6); RecordingReader reader = RecordingReader.open(dir)) {
            OfflineRenderer.Result r = new OfflineRenderer(chain, 8, 6, 100, null).run(reader, (index, timeUs, log, gray, facts) -> {
                dropped[0] += facts.eventsDropped();
                frames[0]++;
            }, t -> { });
            assertEquals(50 * 40, r.events(), "the honest packets, every event");
        }
        assertTrue(frames[0] >= 4, "frames from the honest packets: " + frames[0]);
        assertEquals((1L << 30) + 2 + 0xFFFF_FFFFL, dropped[0], "the lying packets' claimed events, counted as dropped");
    }
}
