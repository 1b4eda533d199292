package dev.afterglow.node.live;

import io.netty.buffer.ByteBuf;

/**
 * The live view's binary WebSocket message: one frame and the event activity since the previous
 * frame the viewer was shown. Little-endian, 32-byte header, then two planes of
 * {@code width x height} bytes, row-major, no padding:
 *
 * <pre>
 *  byte     0          1          2          3
 *       +----------+----------+----------+----------+
 *     0 |   'A'    |   'G'    |   'L'    |   'V'    |  magic (0x41 0x47 0x4C 0x56)
 *       +----------+----------+----------+----------+
 *     4 |  version (u16) = 1  |  factor (u16)       |  sensor pixels per live pixel, per axis
 *       +---------------------+---------------------+
 *     8 |  sequence (u64): the node's frame number for this sensor
 *    12 |                                           |
 *       +-------------------------------------------+
 *    16 |  frame time (i64): sensor time in microseconds the frame shows
 *    20 |                                           |
 *       +---------------------+---------------------+
 *    24 |  width (u16)        |  height (u16)       |  live image size
 *       +---------------------+---------------------+
 *    28 |  events (u32): events summed into the activity plane (saturates at 2^32-1)
 *       +-------------------------------------------+
 *    32 |  gray: width*height u8, the tone-mapped frame, each pixel the mean of its block
 *       |  activity: width*height i8, ON minus OFF events of the block as received (before
 *       |  denoise) since the previous frame shown to this viewer, clamped to [-127, 127]
 *       +-------------------------------------------+
 * </pre>
 *
 * In a browser: {@code new DataView(buf).getUint32(0, true) === 0x564C4741}; the planes are
 * {@code new Uint8Array(buf, 32, w*h)} and {@code new Int8Array(buf, 32 + w*h, w*h)}.
 */
public final class LiveFrameCodec {
    /** The four magic bytes read as a little-endian u32 ("AGLV"). */
    public static final int MAGIC = 0x564C4741;
    /** Layout version. */
    public static final int VERSION = 1;
    /** Header length in bytes. */
    public static final int HEADER_BYTES = 32;

    private LiveFrameCodec() {
    }

    /** Message length for a live image of {@code pixels}. */
    public static int length(int pixels) {
        return HEADER_BYTES + 2 * pixels;
    }

    /** Writes a whole message into {@code out}. */
    public static void write(ByteBuf out, int factor, long sequence, long frameTimeUs, int width, int height,
            long events, byte[] gray, byte[] activity) {
        int pixels = width * height;
        out.writeIntLE(MAGIC);
        out.writeShortLE(VERSION);
        out.writeShortLE(factor);
        out.writeLongLE(sequence);
        out.writeLongLE(frameTimeUs);
        out.writeShortLE(width);
        out.writeShortLE(height);
        out.writeIntLE((int) Math.min(events, 0xFFFF_FFFFL));
        out.writeBytes(gray, 0, pixels);
        out.writeBytes(activity, 0, pixels);
    }
}
