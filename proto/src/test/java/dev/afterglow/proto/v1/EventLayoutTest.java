package dev.afterglow.proto.v1;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import com.google.protobuf.ByteString;
import com.google.protobuf.InvalidProtocolBufferException;
import java.util.HexFormat;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The 8-byte event record of {@code EventPacket.events}, checked against the bit diagram in
 * afterglow.proto with a writer and reader ({@link DiagramEventLayout}) written from that diagram
 * alone, independent of the filters module.
 */
class EventLayoutTest {

    @Test
    void shouldPlaceEachFieldWhereTheDiagramDrawsIt() {
        // Expected bytes worked out by hand from the diagram: dt 0x01020304 little-endian in
        // bytes 0..3, x 0x0506 in bytes 4..5, yp = (1 << 15) | 0x0708 = 0x8708 in bytes 6..7.
        // Second record: all fields at their largest, polarity OFF.
        byte[] bytes = DiagramEventLayout.write(
                new long[] {0x01020304L, 0xFFFF_FFFFL},
                new int[] {0x0506, 0xFFFF},
                new int[] {0x0708, 0x7FFF},
                new int[] {1, 0});
        assertArrayEquals(HexFormat.of().parseHex("0403020106050887" + "ffffffffffffff7f"), bytes);
    }

    @Test
    void shouldDecodeHandWrittenRecords() {
        // ON event at (3, 2), dt = 256 us; OFF event at (65535, 32767), dt = 0.
        byte[] bytes = HexFormat.of().parseHex("0001000003000280" + "00000000ffffff7f");
        DiagramEventLayout.Events ev = DiagramEventLayout.read(bytes);
        assertArrayEquals(new long[] {256, 0}, ev.dt());
        assertArrayEquals(new int[] {3, 65535}, ev.x());
        assertArrayEquals(new int[] {2, 32767}, ev.y());
        assertArrayEquals(new int[] {1, 0}, ev.p());
    }

    @Test
    void shouldRoundTripSeededEventsThroughAnEventPacketEnvelope() throws InvalidProtocolBufferException {
        SplittableRandom random = new SplittableRandom(20_240_917L);
        int n = 5_000;
        long[] dt = new long[n];
        int[] x = new int[n];
        int[] y = new int[n];
        int[] p = new int[n];
        for (int i = 0; i < n; i++) {
            dt[i] = random.nextLong(1L << 32);
            x[i] = random.nextInt(1 << 16);
            y[i] = random.nextInt(1 << 15);
            p[i] = random.nextInt(2);
        }
        long timeBaseUs = 123_456_789_012L;
        Envelope sent = Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setEvents(EventPacket.newBuilder()
                        .setSequence(1)
                        .setTimeBaseUs(timeBaseUs)
                        .setEventCount(n)
                        .setEvents(ByteString.copyFrom(DiagramEventLayout.write(dt, x, y, p))))
                .build();

        EventPacket packet = Envelope.parseFrom(sent.toByteArray()).getEvents();
        assertEquals((long) packet.getEventCount() * DiagramEventLayout.RECORD_BYTES, packet.getEvents().size());
        DiagramEventLayout.Events ev = DiagramEventLayout.read(packet.getEvents().toByteArray());

        assertArrayEquals(dt, ev.dt());
        assertArrayEquals(x, ev.x());
        assertArrayEquals(y, ev.y());
        assertArrayEquals(p, ev.p());
    }
}
