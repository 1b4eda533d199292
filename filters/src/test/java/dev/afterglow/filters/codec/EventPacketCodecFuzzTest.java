package dev.afterglow.filters.codec;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.EventPacketCodecTest.Event;
import dev.afterglow.filters.fuzz.FuzzInputs;
import dev.afterglow.filters.fuzz.FuzzTarget;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.Arrays;
import java.util.Random;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * Fuzz target for the packet decoder: arbitrary event bytes, declared counts, time bases, sensor
 * sizes and batch capacities, in heap, direct, read-only, big- and little-endian buffers at any
 * position. The decoder must never throw, must classify the packet as documented (length
 * mismatch, too many events, or decoded), must agree event for event with the byte-by-byte reader
 * of {@link EventPacketCodecTest} (written from the bit diagram), must account for every declared
 * event (kept + outside the sensor + offset too large = count), must keep only events inside the
 * sensor with offsets in [0, 2^30) bounded by {@code maxT}, in the packet's order, and must leave
 * the caller's buffer as it was.
 */
@FuzzTarget
class EventPacketCodecFuzzTest {
    private static final int LATE = EventBatch.MAX_OFFSET_US;

    /** One decoder call: geometry, batch capacity, declared count, time base, and the buffer's bytes and form. */
    record Packet(int width, int height, int capacity, int eventCount, long timeBaseUs, byte[] events,
            int offset, boolean direct, boolean bigEndian, boolean readOnly) {
        @Override
        public String toString() {
            return "Packet[" + width + "x" + height + ", capacity=" + capacity + ", eventCount=" + eventCount
                    + ", timeBaseUs=" + timeBaseUs + ", offset=" + offset + ", direct=" + direct + ", bigEndian="
                    + bigEndian + ", readOnly=" + readOnly + ", events(" + events.length + ")="
                    + FuzzInputs.hex(events) + "]";
        }
    }

    @Property
    void decodesEveryPacketLikeTheByteByByteReaderAndAccountsForEveryEvent(@ForAll("packets") Packet p) {
        EventPacketCodec codec = new EventPacketCodec(p.width(), p.height());
        ByteBuffer buffer = buffer(p);
        int position = buffer.position();
        int limit = buffer.limit();
        EventBatch out = new EventBatch(p.capacity());
        dirty(out);
        DecodeResult result = new DecodeResult();
        result.decoded = 7;
        result.outsideSensor = 8;
        result.offsetTooLarge = 9;

        assertSame(result, codec.decode(buffer, p.eventCount(), p.timeBaseUs(), out, result));

        assertEquals(position, buffer.position(), "position untouched");
        assertEquals(limit, buffer.limit(), "limit untouched");
        assertEquals(p.bigEndian() ? ByteOrder.BIG_ENDIAN : ByteOrder.LITTLE_ENDIAN, buffer.order(), "order untouched");
        byte[] after = new byte[p.events().length];
        buffer.duplicate().get(after);
        assertArrayEquals(p.events(), after, "bytes untouched");
        assertEquals(p.timeBaseUs(), out.timeBaseUs, "time base");

        DecodeResult.Status expected = p.eventCount() < 0 || 8L * p.eventCount() != p.events().length
                ? DecodeResult.Status.LENGTH_MISMATCH
                : p.eventCount() > p.capacity() ? DecodeResult.Status.TOO_MANY_EVENTS : DecodeResult.Status.OK;
        assertEquals(expected, result.status);
        if (expected != DecodeResult.Status.OK) {
            assertEquals(0, out.size, "a refused packet leaves an empty batch");
            assertEquals(0, result.decoded + result.outsideSensor + result.offsetTooLarge, "a refused packet counts no events");
            return;
        }

        Event[] all = EventPacketCodecTest.readByHand(p.events(), 0, p.eventCount());
        int kept = 0;
        int outside = 0;
        int late = 0;
        int maxT = 0;
        for (Event e : all) {
            // An event both outside and late counts as outside: the check the decoder makes first.
            if (e.x() >= p.width() || e.y() >= p.height()) {
                outside++;
            } else if (e.dt() >= LATE) {
                late++;
            } else {
                if (kept >= out.size || e.x() != out.x[kept] || e.y() != out.y[kept] || e.dt() != out.t[kept]
                        || e.p() != out.p[kept]) {
                    fail("kept event " + kept + ": expected " + e + ", decoded " + (kept >= out.size ? "nothing"
                            : new Event(out.t[kept], out.x[kept], out.y[kept], out.p[kept])));
                }
                maxT = Math.max(maxT, (int) e.dt());
                kept++;
            }
        }
        assertEquals(kept, out.size, "events kept");
        assertEquals(kept, result.decoded, "decoded count");
        assertEquals(outside, result.outsideSensor, "outside count");
        assertEquals(late, result.offsetTooLarge, "late count");
        assertEquals(p.eventCount(), result.decoded + result.outsideSensor + result.offsetTooLarge, "every event accounted for");
        assertEquals(maxT, out.maxT, "maxT is the largest kept offset");
        for (int i = 0; i < out.size; i++) {
            if (out.x[i] < 0 || out.x[i] >= p.width() || out.y[i] < 0 || out.y[i] >= p.height()) {
                fail("event " + i + " outside the sensor");
            }
            if (out.t[i] < 0 || out.t[i] >= LATE || out.t[i] > out.maxT) {
                fail("event " + i + " offset " + out.t[i] + " not in [0, 2^30) or above maxT " + out.maxT);
            }
            if (out.p[i] != 1 && out.p[i] != -1) {
                fail("event " + i + " polarity " + out.p[i]);
            }
        }
    }

    @Property
    void encodedBatchesDecodeToTheSameEvents(@ForAll("batches") EventBatch batch) {
        int width = 1;
        int height = 1;
        for (int i = 0; i < batch.size; i++) {
            width = Math.max(width, batch.x[i] + 1);
            height = Math.max(height, batch.y[i] + 1);
        }
        byte[] bytes = EventPacketCodec.encode(batch);
        assertEquals(8 * batch.size, bytes.length);
        EventBatch out = new EventBatch(Math.max(1, batch.size));
        DecodeResult result = new EventPacketCodec(width, height)
                .decode(ByteBuffer.wrap(bytes), batch.size, batch.timeBaseUs, out, new DecodeResult());
        assertTrue(result.ok());
        assertEquals(batch.size, out.size);
        for (int i = 0; i < batch.size; i++) {
            if (batch.x[i] != out.x[i] || batch.y[i] != out.y[i] || batch.t[i] != out.t[i] || batch.p[i] != out.p[i]) {
                fail("event " + i + " changed in the round trip");
            }
        }
    }

    @Provide
    Arbitrary<Packet> packets() {
        return FuzzInputs.from(EventPacketCodecFuzzTest::packet);
    }

    @Provide
    Arbitrary<EventBatch> batches() {
        return FuzzInputs.from(r -> {
            int n = r.nextInt(4) == 0 ? r.nextInt(2000) : r.nextInt(40);
            EventBatch b = new EventBatch(Math.max(1, n));
            b.reset(FuzzInputs.near(r, 1000L, 0L, Long.MAX_VALUE - LATE, 1L << 32));
            for (int i = 0; i < n; i++) {
                b.add(edgeOr(r, EventPacketCodec.MAX_X), edgeOr(r, EventPacketCodec.MAX_Y),
                        b.timeBaseUs + edgeOr(r, LATE - 1), r.nextBoolean() ? 1 : -1);
            }
            return b;
        });
    }

    /** 0, the largest value, or any value in [0, max]. */
    private static int edgeOr(Random r, int max) {
        return switch (r.nextInt(4)) {
            case 0 -> 0;
            case 1 -> max;
            default -> r.nextInt(max + 1);
        };
    }

    private static Packet packet(Random r) {
        int width = Math.min(Math.max(1, switch (r.nextInt(5)) {
            case 0 -> FuzzInputs.oneOf(r, 1, 2, 640, 65535, 65536);
            case 1 -> 1 + r.nextInt(65536);
            default -> 1 + r.nextInt(1280);
        }), 65536);
        int height = Math.min(Math.max(1, switch (r.nextInt(5)) {
            case 0 -> FuzzInputs.oneOf(r, 1, 2, 480, 32767, 32768);
            case 1 -> 1 + r.nextInt(32768);
            default -> 1 + r.nextInt(720);
        }), 32768);
        int n = r.nextInt(8) == 0 ? r.nextInt(3000) : r.nextInt(48);
        byte[] bytes = new byte[8 * n];
        for (int i = 0; i < n; i++) {
            if (r.nextInt(10) == 0) { // pure noise
                for (int k = 0; k < 8; k++) {
                    bytes[8 * i + k] = (byte) r.nextInt();
                }
                continue;
            }
            long dt = switch (r.nextInt(6)) {
                case 0 -> LATE + r.nextInt(3) - 1;                 // around the 2^30 limit
                case 1 -> FuzzInputs.oneOf(r, 0L, 0xFFFFFFFFL, 0x80000000L, 0x7FFFFFFFL);
                case 2 -> r.nextInt() & 0xFFFFFFFFL;
                default -> r.nextInt(LATE);
            };
            int x = r.nextBoolean() ? r.nextInt(width) : (width + r.nextInt(5) - 2) & 0xFFFF;
            int y = r.nextBoolean() ? r.nextInt(height) : (height + r.nextInt(5) - 2) & 0x7FFF;
            EventPacketCodecTest.writeByHand(bytes, 8 * i, new Event(dt, x, y, r.nextBoolean() ? 1 : -1));
        }
        if (r.nextInt(10) == 0) { // a byte length that is not 8 * count
            bytes = Arrays.copyOf(bytes, Math.max(0, bytes.length + r.nextInt(15) - 7));
        }
        int count = switch (r.nextInt(12)) {
            case 0 -> n + r.nextInt(5) - 2;
            case 1 -> n + (1 << 29);        // 8 * count wraps to the same int length
            case 2 -> FuzzInputs.oneOf(r, -1, Integer.MIN_VALUE, Integer.MAX_VALUE, -n);
            default -> n;
        };
        int capacity = Math.max(1, switch (r.nextInt(6)) {
            case 0 -> n - 1;
            case 1 -> n + 1;
            case 2 -> 1 + r.nextInt(100);
            default -> n;
        });
        long timeBase = FuzzInputs.near(r, 1000L, 0L, 1L << 32, Long.MAX_VALUE, Long.MIN_VALUE);
        return new Packet(width, height, capacity, count, timeBase, bytes, r.nextInt(4) == 0 ? r.nextInt(9) : 0,
                r.nextBoolean(), r.nextBoolean(), r.nextInt(5) == 0);
    }

    /** The packet's bytes in the buffer form it asks for, surrounded by junk the decoder must not read. */
    private static ByteBuffer buffer(Packet p) {
        int n = p.events().length;
        ByteBuffer b = p.direct() ? ByteBuffer.allocateDirect(p.offset() + n + 8) : ByteBuffer.allocate(p.offset() + n + 8);
        for (int i = 0; i < b.capacity(); i++) {
            b.put(i, (byte) 0xA5);
        }
        b.position(p.offset());
        b.put(p.events());
        b.position(p.offset()).limit(p.offset() + n);
        b.order(p.bigEndian() ? ByteOrder.BIG_ENDIAN : ByteOrder.LITTLE_ENDIAN);
        if (p.readOnly()) {
            b = b.asReadOnlyBuffer().order(b.order());
        }
        return b;
    }

    /** Leftovers of an earlier packet, which a decode must replace. */
    private static void dirty(EventBatch b) {
        Arrays.fill(b.x, -1);
        Arrays.fill(b.y, -1);
        Arrays.fill(b.t, -1);
        b.size = b.capacity();
        b.maxT = Integer.MAX_VALUE;
        b.timeBaseUs = 12345;
    }
}
