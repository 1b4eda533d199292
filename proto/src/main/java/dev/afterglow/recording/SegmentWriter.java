package dev.afterglow.recording;

import dev.afterglow.proto.v1.RecordingHeader;
import java.io.BufferedOutputStream;
import java.io.Closeable;
import java.io.FileOutputStream;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Path;

/**
 * Writes one segment file: the signature and the header record at creation, then whole records
 * appended through a buffer. Nothing reaches the file system before {@link #flush} (or a full
 * buffer); {@link #flush}{@code (true)} also forces the bytes to the device. Single-threaded.
 */
final class SegmentWriter implements Closeable {
    private static final int BUFFER_BYTES = 1 << 20;

    private final Path path;
    private final FileOutputStream file;
    private final BufferedOutputStream out;
    private final byte[] prefix = new byte[RecordFormat.PREFIX];
    private final byte[] crcBytes = new byte[RecordFormat.SUFFIX];
    private long size;

    /**
     * Creates {@code path} (which must not exist) and writes the signature and {@code header}.
     *
     * @throws IOException if the file exists or cannot be written
     */
    SegmentWriter(Path path, RecordingHeader header) throws IOException {
        this.path = path;
        this.file = new FileOutputStream(path.toFile(), false);
        this.out = new BufferedOutputStream(file, BUFFER_BYTES);
        try {
            out.write(RecordFormat.SIGNATURE);
            size = RecordFormat.SIGNATURE.length;
            append(RecordFormat.HEADER, header.toByteArray());
        } catch (IOException e) {
            close();
            throw e;
        }
    }

    /** Appends one record; returns its offset in the file. */
    long append(int kind, byte[] payload) throws IOException {
        if (payload.length > RecordFormat.MAX_PAYLOAD) {
            throw new IOException("record of " + payload.length + " bytes exceeds the format's "
                    + RecordFormat.MAX_PAYLOAD + " bytes");
        }
        int crc = RecordFormat.prefixAndCrc(kind, payload, payload.length, prefix);
        ByteBuffer.wrap(crcBytes).order(ByteOrder.LITTLE_ENDIAN).putInt(crc);
        long offset = size;
        out.write(prefix);
        out.write(payload);
        out.write(crcBytes);
        size += RecordFormat.PREFIX + payload.length + RecordFormat.SUFFIX;
        return offset;
    }

    /** Hands the buffered records to the file system; with {@code sync}, waits until they are on the device. */
    void flush(boolean sync) throws IOException {
        out.flush();
        if (sync) {
            file.getChannel().force(false);
        }
    }

    /** Bytes written so far, buffered ones included. */
    long size() {
        return size;
    }

    Path path() {
        return path;
    }

    /** Flushes, forces to the device and closes. */
    @Override
    public void close() throws IOException {
        try {
            flush(true);
        } finally {
            out.close();
        }
    }
}
