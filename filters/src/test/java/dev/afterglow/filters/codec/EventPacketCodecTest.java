package dev.afterglow.filters.codec;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * Checks {@link EventPacketCodec} against an independent reader and writer written here from the
 * documented 8-byte record (the bit diagram in the codec's Javadoc and in the .proto): byte by
 * byte, little-endian, {@code dt = b0 | b1<<8 | b2<<16 | b3<<24}, {@code x = b4 | b5<<8},
 * {@code yp = b6 | b7<<8}, {@code y = yp & 0x7FFF}, {@code p = yp >> 15} (1 = ON, 0 = OFF).
 */
class EventPacketCodecTest {
    private static final int W = 640;
    private static final int H = 480;

    /** One event as read from or written to the layout, with polarity +1/-1. */
    record Event(long dt, int x, int y, int p) {
    }

    /** Independent reader: byte by byte from the documented diagram. */
    static Event[] readByHand(byte[] bytes, int from, int count) {
        Event[] out = new Event[count];
        for (int i = 0; i < count; i++) {
            int o = from + 8 * i;
            long dt = (bytes[o] & 0xFFL) | (bytes[o + 1] & 0xFFL) << 8 | (bytes[o + 2] & 0xFFL) << 16
                    | (bytes[o + 3] & 0xFFL) << 24;
            int x = (bytes[o + 4] & 0xFF) | (bytes[o + 5] & 0xFF) << 8;
            int yp = (bytes[o + 6] & 0xFF) | (bytes[o + 7] & 0xFF) << 8;
            out[i] = new Event(dt, x, yp & 0x7FFF, (yp >> 15) == 1 ? 1 : -1);
        }
        return out;
    }

    /** Independent writer: byte by byte from the documented diagram. */
    static void writeByHand(byte[] bytes, int from, Event... events) {
        for (int i = 0; i < events.length; i++) {
            Event e = events[i];
            int o = from + 8 * i;
            bytes[o] = (byte) e.dt;
            bytes[o + 1] = (byte) (e.dt >>> 8);
            bytes[o + 2] = (byte) (e.dt >>> 16);
            bytes[o + 3] = (byte) (e.dt >>> 24);
            bytes[o + 4] = (byte) e.x;
            bytes[o + 5] = (byte) (e.x >>> 8);
            int yp = e.y | (e.p > 0 ? 0x8000 : 0);
            bytes[o + 6] = (byte) yp;
            bytes[o + 7] = (byte) (yp >>> 8);
        }
    }

    private static EventBatch randomBatch(SplittableRandom rnd, int n, long base, int w, int h) {
        EventBatch b = new EventBatch(Math.max(1, n));
        b.reset(base);
        for (int i = 0; i < n; i++) {
            int dt = rnd.nextInt(4) == 0 ? EventBatch.MAX_OFFSET_US - 1 - rnd.nextInt(3) : rnd.nextInt(EventBatch.MAX_OFFSET_US);
            b.add(rnd.nextInt(w), rnd.nextInt(h), base + dt, rnd.nextBoolean() ? 1 : -1);
        }
        return b;
    }

    private static void assertSameBatch(EventBatch want, EventBatch got) {
        assertEquals(want.size, got.size, "size");
        assertEquals(want.timeBaseUs, got.timeBaseUs, "time base");
        int maxT = 0;
        for (int i = 0; i < want.size; i++) {
            assertEquals(want.x[i], got.x[i], "x of " + i);
            assertEquals(want.y[i], got.y[i], "y of " + i);
            assertEquals(want.t[i], got.t[i], "t of " + i);
            assertEquals(want.p[i], got.p[i], "p of " + i);
            maxT = Math.max(maxT, want.t[i]);
        }
        assertEquals(maxT, got.maxT, "maxT");
    }

    @Test
    void shouldRoundTripRandomBatches() {
        SplittableRandom rnd = new SplittableRandom(1);
        EventPacketCodec codec = new EventPacketCodec(W, H);
        DecodeResult result = new DecodeResult();
        for (int k = 0; k < 50; k++) {
            int n = rnd.nextInt(3000);
            long base = rnd.nextLong(1L << 40);
            EventBatch in = randomBatch(rnd, n, base, W, H);
            byte[] bytes = EventPacketCodec.encode(in);
            assertEquals(8 * n, bytes.length);
            EventBatch out = new EventBatch(3000);
            codec.decode(ByteBuffer.wrap(bytes), n, base, out, result);
            assertTrue(result.ok());
            assertEquals(n, result.decoded);
            assertEquals(0, result.outsideSensor + result.offsetTooLarge);
            assertSameBatch(in, out);
        }
    }

    @Test
    void shouldWriteBytesThatTheDocumentedLayoutReads() {
        SplittableRandom rnd = new SplittableRandom(2);
        // Full range of the layout: x up to 65535, y up to 32767.
        EventBatch in = randomBatch(rnd, 2000, 77, 65536, 32768);
        byte[] bytes = EventPacketCodec.encode(in);
        Event[] read = readByHand(bytes, 0, in.size);
        for (int i = 0; i < in.size; i++) {
            assertEquals(new Event(in.t[i], in.x[i], in.y[i], in.p[i]), read[i], "event " + i);
        }
    }

    @Test
    void shouldDecodeBytesAssembledFromTheDocumentedLayout() {
        Event[] events = {
            new Event(0, 0, 0, -1),
            new Event(1, 639, 479, 1),
            new Event(0x3FFF_FFFFL, 258, 257, 1),
            new Event(0x0102_0304L, 0x0203, 0x01DF, -1),
            new Event(123_456, 1, 300, 1),
        };
        byte[] bytes = new byte[8 * events.length];
        writeByHand(bytes, 0, events);
        // Spot-check the hand-written bytes against the diagram once more: event 3 field by field.
        assertArrayEquals(new byte[] {4, 3, 2, 1, 3, 2, (byte) 0xDF, 1}, java.util.Arrays.copyOfRange(bytes, 24, 32));
        EventBatch out = new EventBatch(8);
        DecodeResult r = new EventPacketCodec(W, H).decode(ByteBuffer.wrap(bytes), events.length, 5_000_000_000L, out,
                new DecodeResult());
        assertTrue(r.ok());
        assertEquals(events.length, out.size);
        for (int i = 0; i < events.length; i++) {
            assertEquals(events[i], new Event(out.t[i], out.x[i], out.y[i], out.p[i]), "event " + i);
            assertEquals(5_000_000_000L + events[i].dt, out.timeUs(i));
        }
    }

    @Test
    void shouldDropAndCountEventsOutsideTheSensor() {
        Event[] events = {
            new Event(10, 5, 5, 1),
            new Event(11, W, 0, 1),          // x = width: outside
            new Event(12, 0, H, -1),         // y = height: outside
            new Event(13, W - 1, H - 1, -1),
            new Event(14, 0xFFFF, 0x7FFF, 1), // largest the layout carries
            new Event(15, 3, 4, 1),
        };
        byte[] bytes = new byte[8 * events.length];
        writeByHand(bytes, 0, events);
        EventBatch out = new EventBatch(8);
        DecodeResult r = new EventPacketCodec(W, H).decode(ByteBuffer.wrap(bytes), events.length, 0, out, new DecodeResult());
        assertTrue(r.ok());
        assertEquals(3, r.outsideSensor);
        assertEquals(0, r.offsetTooLarge);
        assertEquals(3, r.decoded);
        assertEquals(3, out.size);
        assertEquals(new Event(10, 5, 5, 1), new Event(out.t[0], out.x[0], out.y[0], out.p[0]));
        assertEquals(new Event(13, W - 1, H - 1, -1), new Event(out.t[1], out.x[1], out.y[1], out.p[1]));
        assertEquals(new Event(15, 3, 4, 1), new Event(out.t[2], out.x[2], out.y[2], out.p[2]));
        assertEquals(15, out.maxT);
    }

    @Test
    void shouldDropAndCountOffsetsOfTwoToTheThirtyOrMore() {
        long limit = EventBatch.MAX_OFFSET_US; // 2^30
        Event[] events = {
            new Event(limit - 1, 1, 1, 1),  // largest accepted
            new Event(limit, 1, 1, 1),
            new Event(1L << 31, 1, 1, -1),  // top bit of the uint32 set
            new Event(0xFFFF_FFFFL, 1, 1, 1),
            new Event(limit + 12_345, 1, 1, -1),
            new Event(0, 2, 2, -1),
        };
        byte[] bytes = new byte[8 * events.length];
        writeByHand(bytes, 0, events);
        EventBatch out = new EventBatch(8);
        DecodeResult r = new EventPacketCodec(W, H).decode(ByteBuffer.wrap(bytes), events.length, 1000, out, new DecodeResult());
        assertTrue(r.ok());
        assertEquals(4, r.offsetTooLarge);
        assertEquals(0, r.outsideSensor);
        assertEquals(2, out.size);
        assertEquals(limit - 1, out.t[0]);
        assertEquals(0, out.t[1]);
        assertEquals(limit - 1, out.maxT);
    }

    @Test
    void shouldRejectALengthThatIsNotEightBytesPerDeclaredEvent() {
        EventPacketCodec codec = new EventPacketCodec(W, H);
        EventBatch out = new EventBatch(16);
        DecodeResult r = new DecodeResult();
        int[][] cases = {{8 * 3, 4}, {8 * 3, 2}, {8 * 3 + 1, 3}, {7, 1}, {8, -1}, {0, 1}};
        for (int[] c : cases) {
            out.reset(0);
            out.add(0, 0, 0, 1); // a stale event that must not survive a rejected packet
            codec.decode(ByteBuffer.allocate(c[0]), c[1], 0, out, r);
            assertEquals(DecodeResult.Status.LENGTH_MISMATCH, r.status, c[0] + " bytes for " + c[1] + " events");
            assertEquals(0, out.size);
            assertEquals(0, r.decoded);
        }
        codec.decode(ByteBuffer.allocate(0), 0, 0, out, r);
        assertTrue(r.ok(), "an empty packet is fine");
        assertEquals(0, out.size);
    }

    @Test
    void shouldRejectMoreEventsThanTheBatchHolds() {
        EventBatch out = new EventBatch(4);
        DecodeResult r = new EventPacketCodec(W, H).decode(ByteBuffer.allocate(8 * 5), 5, 0, out, new DecodeResult());
        assertEquals(DecodeResult.Status.TOO_MANY_EVENTS, r.status);
        assertEquals(0, out.size);
        r = new EventPacketCodec(W, H).decode(ByteBuffer.allocate(8 * 4), 4, 0, out, r);
        assertTrue(r.ok());
        assertEquals(4, out.size);
    }

    @Test
    void shouldHonourBufferPositionAndIgnoreBufferByteOrder() {
        SplittableRandom rnd = new SplittableRandom(3);
        EventBatch in = randomBatch(rnd, 100, 42, W, H);
        EventPacketCodec codec = new EventPacketCodec(W, H);
        for (ByteOrder order : new ByteOrder[] {ByteOrder.BIG_ENDIAN, ByteOrder.LITTLE_ENDIAN}) {
            // Encode at a non-zero position into a buffer of either order.
            ByteBuffer dst = ByteBuffer.allocate(5 + 800 + 7).order(order);
            dst.position(5);
            EventPacketCodec.encode(in, dst);
            assertEquals(805, dst.position(), "position advanced by 8 bytes per event");
            assertEquals(order, dst.order(), "byte order of the caller's buffer unchanged");
            Event[] read = readByHand(dst.array(), 5, in.size);
            for (int i = 0; i < in.size; i++) {
                assertEquals(new Event(in.t[i], in.x[i], in.y[i], in.p[i]), read[i], order + " event " + i);
            }
            // Decode from a non-zero position of a buffer of either order, with bytes after the limit.
            ByteBuffer src = ByteBuffer.wrap(dst.array()).order(order);
            src.position(5).limit(805);
            EventBatch out = new EventBatch(100);
            DecodeResult r = codec.decode(src, 100, 42, out, new DecodeResult());
            assertTrue(r.ok());
            assertEquals(5, src.position(), "decode does not move the position");
            assertEquals(order, src.order());
            assertSameBatch(in, out);
            // A read-only slice decodes the same.
            out.reset(0);
            codec.decode(src.slice().asReadOnlyBuffer(), 100, 42, out, r);
            assertSameBatch(in, out);
        }
    }

    @Test
    void shouldRefuseToEncodeCoordinatesTheLayoutCannotCarry() {
        EventBatch b = new EventBatch(1);
        b.reset(0);
        b.add(0, 0x8000, 0, 1);
        assertThrows(IllegalArgumentException.class, () -> EventPacketCodec.encode(b));
        b.reset(0);
        b.add(0x10000, 0, 0, 1);
        assertThrows(IllegalArgumentException.class, () -> EventPacketCodec.encode(b));
    }
}
