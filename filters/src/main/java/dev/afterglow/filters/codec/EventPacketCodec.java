package dev.afterglow.filters.codec;

import dev.afterglow.filters.EventBatch;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;

/**
 * Reads and writes the 8-byte little-endian event record used inside event packets.
 *
 * <pre>
 *   byte   0       1       2       3       4       5       6       7
 *        +-------+-------+-------+-------+-------+-------+-------+-------+
 *        |        dt (uint32, LE)        |   x (uint16)  |  yp (uint16)  |
 *        +-------+-------+-------+-------+-------+-------+-------+-------+
 *
 *   yp:  bit 15 14                                              0
 *           +---+-----------------------------------------------+
 *           | p |                  y (15 bits)                  |
 *           +---+-----------------------------------------------+
 * </pre>
 *
 * {@code dt} is microseconds after the packet's time base, {@code p} is 1 for brightness up (ON)
 * and 0 for down (OFF). Read as one little-endian 64-bit word {@code w}: {@code dt = w & 0xFFFFFFFF},
 * {@code x = (w >>> 32) & 0xFFFF}, {@code y = (w >>> 48) & 0x7FFF}, {@code p = w >>> 63}.
 *
 * <p>The decoder validates geometry per event: events outside the sensor and events
 * {@link EventBatch#MAX_OFFSET_US} or more microseconds after the time base are dropped and counted in the
 * {@link DecodeResult}; a byte length that does not match the event count rejects the whole packet.
 *
 * <p>Threading: an instance holds only the sensor geometry and is immutable; the
 * {@link DecodeResult} passed in belongs to the caller's thread.
 */
public final class EventPacketCodec {
    /** Bytes per event record. */
    public static final int BYTES_PER_EVENT = 8;
    /** Largest row index the layout can carry (15 bits). */
    public static final int MAX_Y = 0x7FFF;
    /** Largest column index the layout can carry. */
    public static final int MAX_X = 0xFFFF;

    private final int width;
    private final int height;

    /**
     * @param width sensor width in pixels, 1..65536
     * @param height sensor height in pixels, 1..32768
     */
    public EventPacketCodec(int width, int height) {
        if (width < 1 || width > MAX_X + 1) {
            throw new IllegalArgumentException("width=" + width + " outside [1, " + (MAX_X + 1) + "]");
        }
        if (height < 1 || height > MAX_Y + 1) {
            throw new IllegalArgumentException("height=" + height + " outside [1, " + (MAX_Y + 1) + "]");
        }
        this.width = width;
        this.height = height;
    }

    /**
     * Decodes a packet's event bytes into {@code out}, replacing its content.
     *
     * @param events the packet's event bytes from position to limit (not modified; byte order of
     *     the buffer does not matter)
     * @param eventCount the count the packet declares
     * @param timeBaseUs the packet's time base
     * @param out the batch to fill; its time base becomes {@code timeBaseUs}
     * @param result receives the outcome and the counts of dropped events
     * @return {@code result}, for chaining
     */
    public DecodeResult decode(ByteBuffer events, int eventCount, long timeBaseUs, EventBatch out, DecodeResult result) {
        result.clear();
        out.reset(timeBaseUs);
        int length = events.remaining();
        if (eventCount < 0 || (long) eventCount * BYTES_PER_EVENT != length) {
            result.status = DecodeResult.Status.LENGTH_MISMATCH;
            return result;
        }
        if (eventCount > out.capacity()) {
            result.status = DecodeResult.Status.TOO_MANY_EVENTS;
            return result;
        }
        // Absolute reads on the caller's buffer, swapped if it is big-endian: a duplicate() here
        // would allocate a buffer per packet.
        boolean swap = events.order() != ByteOrder.LITTLE_ENDIAN;
        int base = events.position();
        int[] xs = out.x;
        int[] ys = out.y;
        int[] ts = out.t;
        byte[] ps = out.p;
        int w = width;
        int h = height;
        int n = 0;
        int outside = 0;
        int late = 0;
        int maxT = 0;
        for (int i = 0; i < eventCount; i++) {
            long raw = events.getLong(base + i * BYTES_PER_EVENT);
            long word = swap ? Long.reverseBytes(raw) : raw;
            int dt = (int) word;
            int x = (int) (word >>> 32) & 0xFFFF;
            int y = (int) (word >>> 48) & MAX_Y;
            if (x >= w || y >= h) {
                outside++;
                continue;
            }
            if ((dt & ~(EventBatch.MAX_OFFSET_US - 1)) != 0) { // unsigned dt >= 2^30
                late++;
                continue;
            }
            maxT = Math.max(maxT, dt);
            xs[n] = x;
            ys[n] = y;
            ts[n] = dt;
            ps[n] = word < 0 ? (byte) 1 : (byte) -1;
            n++;
        }
        out.size = n;
        out.maxT = maxT;
        result.decoded = n;
        result.outsideSensor = outside;
        result.offsetTooLarge = late;
        result.status = DecodeResult.Status.OK;
        return result;
    }

    /**
     * Encodes the events of {@code batch} relative to {@code batch.timeBaseUs} into {@code dst}
     * starting at its position, advancing the position.
     *
     * @throws IllegalArgumentException if an event does not fit the layout
     * @throws java.nio.BufferOverflowException if {@code dst} is too small
     */
    public static void encode(EventBatch batch, ByteBuffer dst) {
        ByteBuffer le = dst.order() == ByteOrder.LITTLE_ENDIAN ? dst : dst.duplicate().order(ByteOrder.LITTLE_ENDIAN);
        int start = dst.position();
        for (int i = 0; i < batch.size; i++) {
            int x = batch.x[i];
            int y = batch.y[i];
            if (x < 0 || x > MAX_X || y < 0 || y > MAX_Y) {
                throw new IllegalArgumentException("event " + i + " at (" + x + ", " + y + ") does not fit the layout");
            }
            long word = (batch.t[i] & 0xFFFFFFFFL)
                    | ((long) x << 32)
                    | ((long) y << 48)
                    | (batch.p[i] > 0 ? 1L << 63 : 0L);
            le.putLong(start + i * BYTES_PER_EVENT, word);
        }
        dst.position(start + batch.size * BYTES_PER_EVENT);
    }

    /** Encodes the events of {@code batch} into a new array of {@code size * 8} bytes. */
    public static byte[] encode(EventBatch batch) {
        byte[] bytes = new byte[batch.size * BYTES_PER_EVENT];
        encode(batch, ByteBuffer.wrap(bytes));
        return bytes;
    }
}
