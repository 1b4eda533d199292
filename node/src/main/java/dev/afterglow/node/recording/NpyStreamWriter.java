package dev.afterglow.node.recording;

import dev.afterglow.node.learned.NpyHeader;
import java.io.Closeable;
import java.io.IOException;
import java.io.RandomAccessFile;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.channels.FileChannel;
import java.nio.file.Path;

/**
 * Writes a NumPy {@code .npy} file ({@link NpyHeader}) one frame at a time, for arrays too large to hold in memory: the header is written
 * first with room for the final shape and rewritten with the frame count on {@link #close}. The
 * array is [frames, height, width] of uint8 ({@code |u1}) or little-endian float32 ({@code <f4}).
 */
public final class NpyStreamWriter implements Closeable {
    /** Header bytes including the magic: a multiple of 64, with room for any frame count. */
    private static final int HEADER_BYTES = 128;

    private final RandomAccessFile file;
    private final FileChannel channel;
    private final boolean float32;
    private final int height;
    private final int width;
    private final ByteBuffer row;
    private long frames;

    /** @param float32 true for {@code <f4} log images, false for {@code |u1} 8-bit images */
    public NpyStreamWriter(Path path, boolean float32, int height, int width) throws IOException {
        this.file = new RandomAccessFile(path.toFile(), "rw");
        this.file.setLength(0);
        this.channel = file.getChannel();
        this.float32 = float32;
        this.height = height;
        this.width = width;
        this.row = ByteBuffer.allocate(width * height * (float32 ? 4 : 1)).order(ByteOrder.LITTLE_ENDIAN);
        writeHeader();
    }

    private void writeHeader() throws IOException {
        byte[] h = NpyHeader.of(float32 ? "<f4" : "|u1", new long[] {frames, height, width}, HEADER_BYTES);
        if (h.length != HEADER_BYTES) {
            throw new IOException("npy header grew past the " + HEADER_BYTES + " bytes reserved for it");
        }
        channel.write(ByteBuffer.wrap(h), 0);
    }

    /** Appends a float32 frame (width * height values). */
    public void append(float[] frame) throws IOException {
        row.clear();
        row.asFloatBuffer().put(frame, 0, width * height);
        row.position(0).limit(row.capacity());
        write();
    }

    /** Appends an 8-bit frame (width * height values). */
    public void append(byte[] frame) throws IOException {
        row.clear();
        row.put(frame, 0, width * height).flip();
        write();
    }

    private void write() throws IOException {
        long at = HEADER_BYTES + frames * row.capacity();
        while (row.hasRemaining()) {
            at += channel.write(row, at);
        }
        frames++;
    }

    /** Frames written. */
    public long frames() {
        return frames;
    }

    /** Rewrites the header with the frame count and closes. */
    @Override
    public void close() throws IOException {
        try {
            writeHeader();
        } finally {
            file.close();
        }
    }
}
