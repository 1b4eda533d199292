package dev.afterglow.proto.v1;

/**
 * Test-only writer and reader of {@code EventPacket.events}, written straight from the bit
 * diagram in afterglow.proto and kept apart from the production codec in the filters module:
 *
 * <pre>
 *   byte   0       1       2       3       4       5       6       7
 *        |        dt (uint32, LE)        |   x (uint16)  |  yp (uint16)  |
 *   yp:  bit 15 = p, bits 14..0 = y
 * </pre>
 *
 * Each field is assembled byte by byte (least significant byte first) rather than through a
 * {@code ByteBuffer} word, so it shares no code path with the production codec.
 */
final class DiagramEventLayout {
    static final int RECORD_BYTES = 8;

    private DiagramEventLayout() {
    }

    /** Decoded events: dt in microseconds (0 .. 2^32-1), x, y (0 .. 32767), p (0 or 1). */
    record Events(long[] dt, int[] x, int[] y, int[] p) {
        int size() {
            return dt.length;
        }
    }

    static byte[] write(long[] dt, int[] x, int[] y, int[] p) {
        int n = dt.length;
        if (x.length != n || y.length != n || p.length != n) {
            throw new IllegalArgumentException("array lengths differ");
        }
        byte[] out = new byte[n * RECORD_BYTES];
        for (int i = 0; i < n; i++) {
            if (dt[i] < 0 || dt[i] > 0xFFFF_FFFFL) {
                throw new IllegalArgumentException("dt[" + i + "]=" + dt[i] + " is not a uint32");
            }
            if (x[i] < 0 || x[i] > 0xFFFF) {
                throw new IllegalArgumentException("x[" + i + "]=" + x[i] + " is not a uint16");
            }
            if (y[i] < 0 || y[i] > 0x7FFF) {
                throw new IllegalArgumentException("y[" + i + "]=" + y[i] + " does not fit 15 bits");
            }
            if (p[i] != 0 && p[i] != 1) {
                throw new IllegalArgumentException("p[" + i + "]=" + p[i] + " is not 0 or 1");
            }
            int o = i * RECORD_BYTES;
            out[o] = (byte) dt[i];
            out[o + 1] = (byte) (dt[i] >>> 8);
            out[o + 2] = (byte) (dt[i] >>> 16);
            out[o + 3] = (byte) (dt[i] >>> 24);
            out[o + 4] = (byte) x[i];
            out[o + 5] = (byte) (x[i] >>> 8);
            int yp = (p[i] << 15) | y[i];
            out[o + 6] = (byte) yp;
            out[o + 7] = (byte) (yp >>> 8);
        }
        return out;
    }

    static Events read(byte[] bytes) {
        if (bytes.length % RECORD_BYTES != 0) {
            throw new IllegalArgumentException(bytes.length + " bytes is not a whole number of records");
        }
        int n = bytes.length / RECORD_BYTES;
        long[] dt = new long[n];
        int[] x = new int[n];
        int[] y = new int[n];
        int[] p = new int[n];
        for (int i = 0; i < n; i++) {
            int o = i * RECORD_BYTES;
            dt[i] = u8(bytes[o]) | u8(bytes[o + 1]) << 8 | u8(bytes[o + 2]) << 16 | u8(bytes[o + 3]) << 24;
            x[i] = (int) (u8(bytes[o + 4]) | u8(bytes[o + 5]) << 8);
            int yp = (int) (u8(bytes[o + 6]) | u8(bytes[o + 7]) << 8);
            y[i] = yp & 0x7FFF;
            p[i] = yp >>> 15;
        }
        return new Events(dt, x, y, p);
    }

    private static long u8(byte b) {
        return b & 0xFFL;
    }
}
