package dev.afterglow.node.learned;

import java.io.BufferedOutputStream;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.zip.ZipEntry;
import java.util.zip.ZipOutputStream;

/**
 * Writes a numpy {@code .npz} archive: a ZIP file holding one {@code .npy} file per array, in
 * format version 1.0 of the NPY format (numpy's own format description, "A Simple File Format for
 * NumPy Arrays", NEP 1): magic {@code \x93NUMPY}, version bytes 1 0, a little-endian 16-bit header
 * length, an ASCII dict header padded with spaces to a multiple of 64 bytes and ended by a newline,
 * then the little-endian data in C order. Read back with {@code numpy.load(path)}.
 */
public final class NpzWriter implements AutoCloseable {
    private final ZipOutputStream zip;

    /** Opens {@code path} for writing (replacing it); entries are deflated. */
    public NpzWriter(Path path) throws IOException {
        this.zip = new ZipOutputStream(new BufferedOutputStream(Files.newOutputStream(path), 1 << 16));
    }

    /** Adds {@code name}.npy: int16 values written as unsigned 16-bit ({@code <u2}). */
    public void uint16(String name, int[] values, int count, int... shape) throws IOException {
        ByteBuffer b = buffer(2L * count);
        for (int i = 0; i < count; i++) {
            b.putShort((short) values[i]);
        }
        entry(name, "<u2", shape, b);
    }

    /** Adds {@code name}.npy with 64-bit signed integers ({@code <i8}). */
    public void int64(String name, long[] values, int count, int... shape) throws IOException {
        ByteBuffer b = buffer(8L * count);
        for (int i = 0; i < count; i++) {
            b.putLong(values[i]);
        }
        entry(name, "<i8", shape, b);
    }

    /** Adds {@code name}.npy with signed bytes ({@code |i1}). */
    public void int8(String name, byte[] values, int count, int... shape) throws IOException {
        ByteBuffer b = buffer(count);
        b.put(values, 0, count);
        entry(name, "|i1", shape, b);
    }

    /** Adds {@code name}.npy with 32-bit floats ({@code <f4}). */
    public void float32(String name, float[] values, int count, int... shape) throws IOException {
        ByteBuffer b = buffer(4L * count);
        for (int i = 0; i < count; i++) {
            b.putFloat(values[i]);
        }
        entry(name, "<f4", shape, b);
    }

    /** Adds {@code name}.npy with 64-bit floats ({@code <f8}). */
    public void float64(String name, double[] values, int count, int... shape) throws IOException {
        ByteBuffer b = buffer(8L * count);
        for (int i = 0; i < count; i++) {
            b.putDouble(values[i]);
        }
        entry(name, "<f8", shape, b);
    }

    private static ByteBuffer buffer(long bytes) {
        if (bytes > Integer.MAX_VALUE - 64) {
            throw new IllegalArgumentException("array of " + bytes + " bytes is too large for one entry");
        }
        return ByteBuffer.allocate((int) bytes).order(ByteOrder.LITTLE_ENDIAN);
    }

    private void entry(String name, String dtype, int[] shape, ByteBuffer data) throws IOException {
        long elements = 1;
        long[] dims = new long[shape.length];
        for (int i = 0; i < shape.length; i++) {
            elements *= shape[i];
            dims[i] = shape[i];
        }
        int itemSize = dtype.endsWith("8") ? 8 : dtype.endsWith("4") ? 4 : dtype.endsWith("2") ? 2 : 1;
        if (elements * itemSize != data.position()) {
            throw new IllegalArgumentException(name + ": shape " + java.util.Arrays.toString(shape) + " holds " + elements
                    + " values, " + data.position() / itemSize + " given");
        }
        zip.putNextEntry(new ZipEntry(name + ".npy"));
        zip.write(NpyHeader.of(dtype, dims, 0));
        zip.write(data.array(), 0, data.position());
        zip.closeEntry();
    }

    @Override
    public void close() throws IOException {
        zip.close();
    }
}
