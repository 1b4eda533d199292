package dev.afterglow.node.wire;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.filters.fuzz.FuzzInputs;
import dev.afterglow.filters.fuzz.FuzzTarget;
import dev.afterglow.proto.v1.Envelope;
import io.netty.buffer.ByteBuf;
import io.netty.buffer.ByteBufUtil;
import io.netty.buffer.Unpooled;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * Fuzz target for envelope parsing and the length-prefixed encoding. {@link Envelopes#parse}
 * must agree with protobuf-java's own {@code Envelope.parseFrom(byte[])} (the reference: same
 * message, or both refuse) on random bytes and on valid envelopes with bytes flipped, inserted,
 * deleted or cut, must throw nothing but {@link InvalidProtocolBufferException}, and must leave the
 * buffer's indices and reference count alone. Any valid envelopes (every field of the schema, see
 * {@link RandomMessages}) encoded with {@link Envelopes#delimited} give the bytes of protobuf's
 * {@code writeDelimitedTo}, and the stream of them, cut at any points and read through
 * {@link BoundedVarintFrameDecoder}, parses back to equal envelopes, with every buffer released.
 */
@FuzzTarget
class EnvelopesFuzzTest {

    /** Bytes to parse, placed in a heap or direct buffer after {@code skip} bytes already read. */
    record Bytes(byte[] bytes, boolean direct, int skip) {
        @Override
        public String toString() {
            return "Bytes[direct=" + direct + ", skip=" + skip + ", " + bytes.length + " bytes=" + FuzzInputs.hex(bytes) + "]";
        }
    }

    /** Envelopes to send back to back, the decoder's maximum, and where to cut the stream. */
    record Stream(List<Envelope> envelopes, int maxLength, int[] pieceSizes, boolean direct) {
    }

    @Property
    void parseAgreesWithProtobufAndThrowsNothingElse(@ForAll("bytes") Bytes in) {
        ByteBuf buf = in.direct() ? Unpooled.directBuffer(in.skip() + in.bytes().length) : Unpooled.buffer(in.skip() + in.bytes().length);
        try {
            buf.writeZero(in.skip()).writeBytes(in.bytes()).skipBytes(in.skip());
            int reader = buf.readerIndex();
            int writer = buf.writerIndex();

            Envelope ours = null;
            InvalidProtocolBufferException oursRefused = null;
            try {
                ours = Envelopes.parse(buf);
            } catch (InvalidProtocolBufferException e) {
                oursRefused = e;
            }
            Envelope reference = null;
            try {
                reference = Envelope.parseFrom(in.bytes());
            } catch (InvalidProtocolBufferException e) {
                assertNull(ours, "protobuf refuses (" + e.getMessage() + ") what Envelopes.parse accepted");
            }
            if (reference != null) {
                assertNull(oursRefused, "Envelopes.parse refused what protobuf accepts");
                assertEquals(reference, ours);
                assertEquals(reference, Envelope.parseFrom(ours.toByteArray()), "re-encoding is stable");
            }
            assertEquals(reader, buf.readerIndex(), "reader index untouched");
            assertEquals(writer, buf.writerIndex(), "writer index untouched");
            assertEquals(1, buf.refCnt(), "the caller's buffer is not released by parse");
        } catch (IOException e) {
            throw new AssertionError(e);
        } finally {
            buf.release();
        }
    }

    @Property
    void delimitedEnvelopesCutAnywhereDecodeBackEqual(@ForAll("streams") Stream in) throws IOException {
        ByteArrayOutputStream stream = new ByteArrayOutputStream();
        for (Envelope e : in.envelopes()) {
            ByteBuf delimited = Envelopes.delimited(e);
            try {
                byte[] ours = ByteBufUtil.getBytes(delimited);
                ByteArrayOutputStream reference = new ByteArrayOutputStream();
                e.writeDelimitedTo(reference);
                assertArrayEquals(reference.toByteArray(), ours, "delimited bytes as protobuf's writeDelimitedTo");
                stream.writeBytes(ours);
            } finally {
                delimited.release();
            }
        }
        FrameStreams.TrackingAllocator alloc = new FrameStreams.TrackingAllocator(in.direct());
        FrameStreams.Decoded got = FrameStreams.decode(FuzzInputs.cut(stream.toByteArray(), in.pieceSizes()), in.maxLength(), alloc);
        assertNull(got.error());
        assertEquals(0, got.truncated());
        List<Envelope> parsed = new ArrayList<>();
        for (byte[] frame : got.frames()) {
            parsed.add(Envelopes.parse(Unpooled.wrappedBuffer(frame)));
        }
        assertEquals(in.envelopes(), parsed);
        alloc.assertAllReleased("after close");
    }

    @Provide
    Arbitrary<Bytes> bytes() {
        return FuzzInputs.from(r -> {
            byte[] b = switch (r.nextInt(10)) {
                case 0, 1 -> FuzzInputs.bytes(r, 64);
                case 2 -> envelope(r).toByteArray();
                default -> FuzzInputs.mutate(r, envelope(r).toByteArray());
            };
            return new Bytes(b, r.nextBoolean(), r.nextInt(3) == 0 ? r.nextInt(16) : 0);
        });
    }

    @Provide
    Arbitrary<Stream> streams() {
        return FuzzInputs.from(r -> {
            List<Envelope> envelopes = new ArrayList<>();
            int largest = 0;
            for (int n = 1 + r.nextInt(5); n > 0; n--) {
                Envelope e = envelope(r);
                envelopes.add(e);
                largest = Math.max(largest, e.getSerializedSize());
            }
            int maxLength = r.nextBoolean() ? largest : largest + r.nextInt(1 << 20);
            return new Stream(envelopes, maxLength, FuzzInputs.chunkSizes(r), r.nextBoolean());
        });
    }

    private static Envelope envelope(Random r) {
        return RandomMessages.fill(r, Envelope.newBuilder()).build();
    }
}
