package dev.afterglow.proto.v1;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.google.protobuf.ByteString;
import com.google.protobuf.InvalidProtocolBufferException;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.util.Arrays;
import java.util.HexFormat;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The bytes of the TCP framing and of a few small envelopes, checked against the protobuf
 * documentation, "Encoding" (protobuf.dev/programming-guides/encoding): a varint is base 128,
 * least significant 7-bit group first, with the high bit of each byte set when another byte
 * follows; a length-delimited stream puts that varint length before each message; a field's tag
 * is {@code (field_number << 3) | wire_type}, wire type 0 for varints and 2 for length-delimited.
 */
class DelimitedFramingTest {

    /** Message lengths and their varint prefixes, worked out by hand from the rule above. */
    static Stream<Arguments> lengthsAndPrefixes() {
        return Stream.of(
                Arguments.of(0, "00"),
                Arguments.of(2, "02"),
                Arguments.of(127, "7f"), // largest one-byte varint
                Arguments.of(128, "8001"), // 0000000 | 0000001
                Arguments.of(150, "9601"), // the documentation's first example value
                Arguments.of(300, "ac02"), // the documentation's worked example: 10101100 00000010
                Arguments.of(16_383, "ff7f"), // 2^14 - 1: largest two-byte varint
                Arguments.of(16_384, "808001"),
                Arguments.of(2_097_151, "ffff7f"), // 2^21 - 1
                Arguments.of(2_097_152, "80808001"));
    }

    @ParameterizedTest(name = "length {0} -> prefix {1}")
    @MethodSource("lengthsAndPrefixes")
    void shouldWriteLengthPrefixAsBase128Varint(int length, String prefixHex) throws IOException {
        Envelope message = envelopeOfSize(length);
        byte[] prefix = HexFormat.of().parseHex(prefixHex);

        ByteArrayOutputStream out = new ByteArrayOutputStream();
        message.writeDelimitedTo(out);
        byte[] framed = out.toByteArray();

        assertEquals(prefix.length + length, framed.length);
        assertArrayEquals(prefix, Arrays.copyOf(framed, prefix.length));
        assertArrayEquals(message.toByteArray(), Arrays.copyOfRange(framed, prefix.length, framed.length));
    }

    @ParameterizedTest(name = "prefix {1} + {0} bytes")
    @MethodSource("lengthsAndPrefixes")
    void shouldReadFrameBuiltFromHandWrittenPrefix(int length, String prefixHex) throws IOException {
        Envelope message = envelopeOfSize(length);
        ByteArrayOutputStream stream = new ByteArrayOutputStream();
        stream.write(HexFormat.of().parseHex(prefixHex));
        stream.write(message.toByteArray());
        stream.write(HexFormat.of().parseHex(prefixHex)); // the same frame again, back to back
        stream.write(message.toByteArray());

        ByteArrayInputStream in = new ByteArrayInputStream(stream.toByteArray());
        assertEquals(message, Envelope.parseDelimitedFrom(in));
        assertEquals(message, Envelope.parseDelimitedFrom(in));
        assertEquals(0, in.available());
    }

    @Test
    void shouldRejectFrameShorterThanItsPrefixSays() {
        Envelope message = envelopeOfSize(300);
        byte[] body = message.toByteArray();
        ByteArrayOutputStream stream = new ByteArrayOutputStream();
        stream.writeBytes(new byte[] {(byte) 0xAC, 0x02});
        stream.write(body, 0, body.length - 1);

        assertThrows(InvalidProtocolBufferException.class,
                () -> Envelope.parseDelimitedFrom(new ByteArrayInputStream(stream.toByteArray())));
    }

    @Test
    void shouldEncodeFieldNumbersAndWireTypesAsTheSchemaDeclares() {
        // schema_version = 1: tag (1 << 3) | 0 = 0x08, varint 1.
        Envelope version = Envelope.newBuilder().setSchemaVersion(1).build();
        assertArrayEquals(HexFormat.of().parseHex("0801"), version.toByteArray());

        // error = ErrorReport{code = "x"}: tag (7 << 3) | 2 = 0x3a, length 3, then the inner
        // field code: tag (1 << 3) | 2 = 0x0a, length 1, 'x' = 0x78.
        Envelope error = Envelope.newBuilder().setError(ErrorReport.newBuilder().setCode("x")).build();
        assertArrayEquals(HexFormat.of().parseHex("3a030a0178"), error.toByteArray());

        // events = EventPacket{sequence = 300, event_count = 1, events = 8 bytes}:
        // tag (3 << 3) | 2 = 0x1a, length 15; sequence: 0x08, varint 300 = ac 02;
        // event_count: (3 << 3) | 0 = 0x18, 01; events: (4 << 3) | 2 = 0x22, length 08, bytes.
        Envelope events = Envelope.newBuilder()
                .setEvents(EventPacket.newBuilder()
                        .setSequence(300)
                        .setEventCount(1)
                        .setEvents(ByteString.copyFrom(new byte[] {1, 2, 3, 4, 5, 6, 7, 8})))
                .build();
        assertArrayEquals(HexFormat.of().parseHex("1a0f" + "08ac02" + "1801" + "22080102030405060708"),
                events.toByteArray());
    }

    /**
     * An envelope whose encoding is exactly {@code size} bytes, built from an error message of
     * the right length plus, where the varint lengths skip a size, the 2-byte schema_version.
     */
    static Envelope envelopeOfSize(int size) {
        if (size == 0) {
            return Envelope.getDefaultInstance();
        }
        for (int version = 0; version <= 1; version++) {
            for (int n = Math.max(0, size - 16); n <= size; n++) {
                Envelope e = Envelope.newBuilder()
                        .setSchemaVersion(version)
                        .setError(ErrorReport.newBuilder().setMessage("m".repeat(n)))
                        .build();
                if (e.getSerializedSize() == size) {
                    return e;
                }
            }
        }
        throw new IllegalArgumentException("no sample envelope of " + size + " bytes");
    }
}
