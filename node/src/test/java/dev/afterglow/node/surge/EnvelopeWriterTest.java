package dev.afterglow.node.surge;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;

import com.google.protobuf.ByteString;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import java.io.ByteArrayOutputStream;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The hand-written envelope framing against protobuf-java 4.36.2, the reference implementation of
 * the protobuf wire format (protobuf.dev, "Encoding": tags, base-128 varints, proto3 leaves zero
 * values out, fields in number order): the bytes must be identical.
 */
class EnvelopeWriterTest {

    private static final long[][] CASES = {
        // sequence, time base, event count
        {0, 0, 0},
        {0, 1_000_000, 3},
        {1, 5, 1},
        {127, 128, 16},
        {300, 1L << 40, 4096},
        {1L << 62, 9_876_543_210L, 8000},
        {-1L, Long.MAX_VALUE, 65_536}, // uint64 fields at their largest
    };

    private static Envelope reference(long sequence, long timeBaseUs, byte[] events, int offset, int count, String id) {
        return Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                .setSequence(sequence).setTimeBaseUs(timeBaseUs).setEventCount(count)
                .setEvents(ByteString.copyFrom(events, offset, count * 8)).setSensorId(id)).build();
    }

    @Test
    void shouldWriteTheDelimitedBytesProtobufJavaWrites() throws Exception {
        SplittableRandom random = new SplittableRandom(11);
        for (String id : new String[] {"surge-0", "", "a-sensor-name-longer-than-127-bytes-".repeat(4)}) {
            EnvelopeWriter writer = new EnvelopeWriter(id);
            for (long[] c : CASES) {
                int count = (int) c[2];
                byte[] events = new byte[16 + count * 8 + 5];
                random.nextBytes(events);
                ByteArrayOutputStream expected = new ByteArrayOutputStream();
                reference(c[0], c[1], events, 16, count, id).writeDelimitedTo(expected);
                ByteArrayOutputStream actual = new ByteArrayOutputStream();
                writer.writeDelimited(actual, c[0], c[1], events, 16, count);
                assertArrayEquals(expected.toByteArray(), actual.toByteArray(), Arrays.toString(c) + " id=" + id);
            }
        }
    }

    @Test
    void shouldWriteTheDatagramBytesProtobufJavaWrites() {
        SplittableRandom random = new SplittableRandom(12);
        EnvelopeWriter writer = new EnvelopeWriter("surge-3");
        byte[] dst = new byte[writer.datagramSize(65_536)];
        for (long[] c : CASES) {
            int count = (int) c[2];
            byte[] events = new byte[8 + count * 8];
            random.nextBytes(events);
            byte[] expected = reference(c[0], c[1], events, 8, count, "surge-3").toByteArray();
            int n = writer.writeDatagram(dst, c[0], c[1], events, 8, count);
            assertArrayEquals(expected, Arrays.copyOf(dst, n), Arrays.toString(c));
        }
    }
}
