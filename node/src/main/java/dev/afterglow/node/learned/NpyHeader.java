package dev.afterglow.node.learned;

import java.nio.charset.StandardCharsets;

/**
 * The header of a NumPy {@code .npy} file, format version 1.0 as {@code numpy.lib.format} documents
 * it: the magic {@code \x93NUMPY}, the version, the header length (uint16, little-endian) and the
 * dictionary of dtype, order and shape, padded with spaces and a newline to a multiple of 64 bytes.
 */
public final class NpyHeader {
    private NpyHeader() {
    }

    /**
     * The header bytes for an array of {@code dtype} (e.g. {@code <f4}) and {@code shape}, at least
     * {@code minBytes} long (a writer that rewrites its header later reserves the room it needs).
     */
    public static byte[] of(String dtype, long[] shape, int minBytes) {
        StringBuilder dims = new StringBuilder("(");
        for (int i = 0; i < shape.length; i++) {
            dims.append(i > 0 ? ", " : "").append(shape[i]);
        }
        dims.append(shape.length == 1 ? ",)" : ")"); // a 1-tuple is "(n,)"
        String dict = "{'descr': '" + dtype + "', 'fortran_order': False, 'shape': " + dims + ", }";
        int unpadded = 6 + 2 + 2 + dict.length() + 1;
        int total = Math.max((unpadded + 63) / 64 * 64, minBytes);
        if (total % 64 != 0 || total - 10 > 0xFFFF) {
            throw new IllegalArgumentException("npy header of " + total + " bytes: not a multiple of 64 or too long");
        }
        int len = total - 10;
        byte[] h = new byte[total];
        byte[] magic = {(byte) 0x93, 'N', 'U', 'M', 'P', 'Y', 1, 0, (byte) len, (byte) (len >>> 8)};
        System.arraycopy(magic, 0, h, 0, magic.length);
        String text = dict + " ".repeat(len - dict.length() - 1) + "\n";
        System.arraycopy(text.getBytes(StandardCharsets.US_ASCII), 0, h, 10, len);
        return h;
    }
}
