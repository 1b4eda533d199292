package dev.afterglow.recording;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.zip.CRC32C;

/**
 * The byte layout of a recording segment, as {@code recording.proto} documents it: the 8-byte
 * signature, then records of kind (1 byte), payload length (uint32 LE), payload and CRC-32C
 * (uint32 LE) over the kind, length and payload.
 */
public final class RecordFormat {
    /** "AGREC", CR, LF, NUL. */
    static final byte[] SIGNATURE = {0x41, 0x47, 0x52, 0x45, 0x43, 0x0D, 0x0A, 0x00};
    /** Kind of a {@code RecordingHeader} record. */
    public static final int HEADER = 1;
    /** Kind of a {@code RecordedEnvelope} record. */
    public static final int ENVELOPE = 2;
    /** Kind of a {@code RecordingIndex} record. */
    public static final int INDEX = 3;
    /** Largest payload a record may carry; a larger length field is damage. */
    public static final int MAX_PAYLOAD = 64 << 20;
    /** Kind and length. */
    static final int PREFIX = 5;
    /** The CRC after the payload. */
    static final int SUFFIX = 4;
    /** The format version this code writes and reads. */
    public static final int VERSION = 1;
    /** File name extension of segments. */
    public static final String EXTENSION = ".agrec";

    private RecordFormat() {
    }

    /** Writes kind and length into {@code prefix} (5 bytes) and returns the record's CRC-32C. */
    static int prefixAndCrc(int kind, byte[] payload, int length, byte[] prefix) {
        ByteBuffer.wrap(prefix).order(ByteOrder.LITTLE_ENDIAN).put((byte) kind).putInt(length);
        return crc(prefix, payload, length);
    }

    /** CRC-32C over the 5 prefix bytes and the first {@code length} payload bytes. */
    static int crc(byte[] prefix, byte[] payload, int length) {
        CRC32C c = new CRC32C();
        c.update(prefix, 0, PREFIX);
        c.update(payload, 0, length);
        return (int) c.getValue();
    }
}
