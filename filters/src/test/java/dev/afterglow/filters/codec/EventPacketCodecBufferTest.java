package dev.afterglow.filters.codec;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import java.lang.management.ManagementFactory;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** How the decoder treats the caller's buffer: byte order, position, and no allocation per packet. */
class EventPacketCodecBufferTest {

    /**
     * One event record composed byte by byte from the layout drawn in {@link EventPacketCodec}'s
     * Javadoc: dt as uint32 little-endian, x as uint16 little-endian, then y in the low 15 bits and
     * p in bit 15 of a little-endian uint16.
     */
    private static byte[] record(long dt, int x, int y, int on) {
        int yp = y | (on << 15);
        return new byte[] {
            (byte) dt, (byte) (dt >>> 8), (byte) (dt >>> 16), (byte) (dt >>> 24),
            (byte) x, (byte) (x >>> 8),
            (byte) yp, (byte) (yp >>> 8)};
    }

    @Test
    void shouldDecodeTheSameEventsWhateverTheBufferByteOrderAndPosition() {
        byte[] a = record(123_456, 639, 479, 1);
        byte[] b = record(7, 0, 1, 0);
        byte[] bytes = new byte[3 + 16];
        System.arraycopy(a, 0, bytes, 3, 8);
        System.arraycopy(b, 0, bytes, 11, 8);
        EventPacketCodec codec = new EventPacketCodec(640, 480);
        ByteBuffer heapBig = ByteBuffer.wrap(bytes).position(3); // wrap() is big-endian
        ByteBuffer heapLittle = ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN).position(3);
        ByteBuffer direct = ByteBuffer.allocateDirect(bytes.length).put(bytes).position(3);
        for (ByteBuffer buffer : new ByteBuffer[] {heapBig, heapLittle, direct}) {
            EventBatch out = new EventBatch(4);
            DecodeResult result = codec.decode(buffer, 2, 5_000L, out, new DecodeResult());
            String what = buffer.order() + (buffer.isDirect() ? " direct" : " heap");
            assertTrue(result.ok(), what);
            assertEquals(2, out.size, what);
            assertEquals(639, out.x[0], what);
            assertEquals(479, out.y[0], what);
            assertEquals(5_000L + 123_456, out.timeUs(0), what);
            assertEquals(1, out.p[0], what);
            assertEquals(0, out.x[1], what);
            assertEquals(1, out.y[1], what);
            assertEquals(5_007L, out.timeUs(1), what);
            assertEquals(-1, out.p[1], what);
            assertEquals(3, buffer.position(), what + ": position must not move");
        }
    }

    @Test
    void shouldNotAllocatePerDecodedPacket() {
        // Allocation as counted by the JVM's per-thread allocated-bytes counter (com.sun.management).
        com.sun.management.ThreadMXBean threads = (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        if (!threads.isThreadAllocatedMemorySupported()) {
            return;
        }
        threads.setThreadAllocatedMemoryEnabled(true);
        int events = 1024;
        ByteBuffer packet = ByteBuffer.allocate(events * EventPacketCodec.BYTES_PER_EVENT);
        SplittableRandom random = new SplittableRandom(42);
        for (int i = 0; i < events; i++) {
            packet.put(record(random.nextInt(1_000_000), random.nextInt(640), random.nextInt(480), random.nextInt(2)));
        }
        packet.flip();
        EventPacketCodec codec = new EventPacketCodec(640, 480);
        EventBatch out = new EventBatch(events);
        DecodeResult result = new DecodeResult();
        for (int i = 0; i < 50; i++) { // class loading and first-call effects out of the way
            codec.decode(packet, events, i, out, result);
        }
        int packets = 1000;
        long before = threads.getCurrentThreadAllocatedBytes();
        for (int i = 0; i < packets; i++) {
            codec.decode(packet, events, i, out, result);
        }
        long allocated = threads.getCurrentThreadAllocatedBytes() - before;
        assertEquals(events, result.decoded);
        // A ByteBuffer object alone takes well over 16 bytes on a 64-bit JVM (from memory: ~48), so
        // one per packet would show as at least 16 kB here.
        assertTrue(allocated < packets * 16L, "allocated " + allocated + " bytes over " + packets + " packets");
    }
}
