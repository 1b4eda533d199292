package dev.afterglow.recording;

import dev.afterglow.proto.v1.RecordingHeader;
import com.google.protobuf.InvalidProtocolBufferException;
import java.io.Closeable;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.channels.FileChannel;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.Arrays;

/**
 * Reads the records of one segment file in order. It stops at the end of the file, at a record the
 * file ends inside (a torn write), at a CRC mismatch or at an impossible length, and says which
 * and where ({@link #stop()}): every record returned before that is intact. Single-threaded.
 */
public final class SegmentReader implements Closeable {

    /** Why reading stopped. */
    public enum Stop {
        /** Still reading. */
        NONE,
        /** The file ended between records: nothing is damaged. */
        END,
        /** The file ends inside a record (a write cut short, e.g. by a crash). */
        TORN,
        /** A record's CRC-32C does not match its bytes. */
        CRC_MISMATCH,
        /** A record's length field exceeds the format's maximum. */
        BAD_LENGTH,
    }

    /**
     * One record: its kind, offset in the file and payload, the first {@code length} bytes of
     * {@code buffer}. The buffer is the reader's own and is reused by the next {@link #next} call:
     * parse or copy the payload before that.
     */
    public record Record(int kind, long offset, byte[] buffer, int length) {
        /** A copy of the payload. */
        public byte[] payload() {
            return java.util.Arrays.copyOf(buffer, length);
        }

        /** The payload as a protobuf input (no copy). */
        public com.google.protobuf.CodedInputStream input() {
            return com.google.protobuf.CodedInputStream.newInstance(buffer, 0, length);
        }
    }

    private final Path path;
    private final FileChannel channel;
    private final long fileSize;
    private final RecordingHeader header;
    private final ByteBuffer prefix = ByteBuffer.allocate(RecordFormat.PREFIX).order(ByteOrder.LITTLE_ENDIAN);
    private final ByteBuffer crc = ByteBuffer.allocate(RecordFormat.SUFFIX).order(ByteOrder.LITTLE_ENDIAN);
    /** Reused for every record's payload; grows to the largest. */
    private ByteBuffer payload = ByteBuffer.allocate(1 << 16);
    private long position;
    private Stop stop = Stop.NONE;
    private long stopOffset = -1;

    /**
     * Opens a segment and reads its signature and header record.
     *
     * @throws RecordingFormatException if the file is not a segment of a format version this reader knows,
     *     or its header record is damaged
     * @throws IOException if the file cannot be read
     */
    public SegmentReader(Path path) throws IOException {
        this.path = path;
        this.channel = FileChannel.open(path, StandardOpenOption.READ);
        try {
            this.fileSize = channel.size();
            ByteBuffer sig = ByteBuffer.allocate(RecordFormat.SIGNATURE.length);
            if (!readFully(sig, 0) || !Arrays.equals(sig.array(), RecordFormat.SIGNATURE)) {
                throw new RecordingFormatException(path + ": not an Afterglow recording segment (no signature)");
            }
            position = RecordFormat.SIGNATURE.length;
            Record first = next();
            if (first == null || first.kind() != RecordFormat.HEADER) {
                throw new RecordingFormatException(path + ": the first record is not a header ("
                        + (first == null ? describeStop() : "kind " + first.kind()) + ")");
            }
            try {
                header = RecordingHeader.parseFrom(first.input());
            } catch (InvalidProtocolBufferException e) {
                throw new RecordingFormatException(path + ": the header record does not parse: " + e.getMessage());
            }
            if (header.getFormatVersion() != RecordFormat.VERSION) {
                throw new RecordingFormatException(path + ": format version " + header.getFormatVersion()
                        + "; this reader knows " + RecordFormat.VERSION);
            }
        } catch (IOException | RuntimeException e) {
            channel.close();
            throw e;
        }
    }

    /** The segment's header. */
    public RecordingHeader header() {
        return header;
    }

    /** The next intact record, or null when reading has stopped (see {@link #stop()}). */
    public Record next() throws IOException {
        if (stop != Stop.NONE) {
            return null;
        }
        long at = position;
        if (at == fileSize) {
            return halt(Stop.END, at);
        }
        prefix.clear();
        if (!readFully(prefix, at)) {
            return halt(Stop.TORN, at);
        }
        int kind = prefix.get(0) & 0xFF;
        long length = prefix.getInt(1) & 0xFFFFFFFFL;
        if (length > RecordFormat.MAX_PAYLOAD) {
            return halt(Stop.BAD_LENGTH, at);
        }
        if (at + RecordFormat.PREFIX + length + RecordFormat.SUFFIX > fileSize) {
            return halt(Stop.TORN, at);
        }
        if (payload.capacity() < length) {
            payload = ByteBuffer.allocate((int) Math.min(RecordFormat.MAX_PAYLOAD, Math.max(length, 2L * payload.capacity())));
        }
        payload.clear().limit((int) length);
        crc.clear();
        if (!readFully(payload, at + RecordFormat.PREFIX) || !readFully(crc, at + RecordFormat.PREFIX + length)) {
            return halt(Stop.TORN, at);
        }
        int expected = crc.getInt(0);
        if (RecordFormat.crc(prefix.array(), payload.array(), (int) length) != expected) {
            return halt(Stop.CRC_MISMATCH, at);
        }
        position = at + RecordFormat.PREFIX + length + RecordFormat.SUFFIX;
        return new Record(kind, at, payload.array(), (int) length);
    }

    /**
     * The entries of every intact index record of the segment, in file order, found by reading only
     * the records' prefixes and the index records themselves; entries whose offset lies outside the
     * file are left out. The reading position is kept.
     */
    public java.util.List<dev.afterglow.proto.v1.IndexEntry> readIndex() throws IOException {
        java.util.List<dev.afterglow.proto.v1.IndexEntry> entries = new java.util.ArrayList<>();
        long at = RecordFormat.SIGNATURE.length;
        ByteBuffer p = ByteBuffer.allocate(RecordFormat.PREFIX).order(ByteOrder.LITTLE_ENDIAN);
        while (at + RecordFormat.PREFIX <= fileSize) {
            p.clear();
            if (!readFully(p, at)) {
                break;
            }
            long length = p.getInt(1) & 0xFFFFFFFFL;
            long end = at + RecordFormat.PREFIX + length + RecordFormat.SUFFIX;
            if (length > RecordFormat.MAX_PAYLOAD || end > fileSize) {
                break;
            }
            if ((p.get(0) & 0xFF) == RecordFormat.INDEX) {
                ByteBuffer payload = ByteBuffer.allocate((int) length);
                ByteBuffer c = ByteBuffer.allocate(RecordFormat.SUFFIX).order(ByteOrder.LITTLE_ENDIAN);
                if (!readFully(payload, at + RecordFormat.PREFIX) || !readFully(c, at + RecordFormat.PREFIX + length)
                        || RecordFormat.crc(p.array(), payload.array(), (int) length) != c.getInt(0)) {
                    break;
                }
                for (var e : dev.afterglow.proto.v1.RecordingIndex.parseFrom(payload.array()).getEntriesList()) {
                    // An offset outside the file cannot be sought to (a file written by something else): left out.
                    if (e.getOffset() >= RecordFormat.SIGNATURE.length && e.getOffset() < fileSize) {
                        entries.add(e);
                    }
                }
            }
            at = end;
        }
        return entries;
    }

    /** Continues reading at {@code offset}, which must be the start of a record (e.g. from an index entry). */
    public void seek(long offset) {
        if (offset < RecordFormat.SIGNATURE.length || offset > fileSize) {
            throw new IllegalArgumentException(path + ": offset " + offset + " outside the segment");
        }
        position = offset;
        stop = Stop.NONE;
        stopOffset = -1;
    }

    private Record halt(Stop why, long at) {
        stop = why;
        stopOffset = at;
        return null;
    }

    private boolean readFully(ByteBuffer b, long at) throws IOException {
        long p = at;
        while (b.hasRemaining()) {
            int n = channel.read(b, p);
            if (n < 0) {
                return false;
            }
            p += n;
        }
        return true;
    }

    /** Why reading stopped; {@link Stop#NONE} while records remain. */
    public Stop stop() {
        return stop;
    }

    /** Offset of the record reading stopped at (the file size at a clean end); -1 while reading. */
    public long stopOffset() {
        return stopOffset;
    }

    /** A line for people: "end of file", or what is wrong and where. */
    public String describeStop() {
        return switch (stop) {
            case NONE -> "reading";
            case END -> "end of file";
            case TORN -> path + ": torn record at byte " + stopOffset + " (the file ends inside it); the records before it are intact";
            case CRC_MISMATCH -> path + ": CRC-32C mismatch in the record at byte " + stopOffset + "; the records before it are intact";
            case BAD_LENGTH -> path + ": impossible record length at byte " + stopOffset + "; the records before it are intact";
        };
    }

    /** The file read. */
    public Path path() {
        return path;
    }

    @Override
    public void close() throws IOException {
        channel.close();
    }
}
