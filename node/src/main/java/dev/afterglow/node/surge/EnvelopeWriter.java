package dev.afterglow.node.surge;

import java.io.IOException;
import java.io.OutputStream;
import java.nio.charset.StandardCharsets;

/**
 * Writes {@code Envelope{schema_version, events: EventPacket}} messages around event bytes that are
 * already encoded, so a sender never copies or re-encodes events: only the few header bytes
 * (sequence, time base, count, lengths) change per packet. The output is byte for byte what
 * protobuf-java writes for the same message (fields in number order, zero values left out, base-128
 * varints), checked against it in the tests:
 *
 * <pre>
 * [length varint]                        only for TCP (delimited framing)
 * 08 01                                  Envelope.schema_version = 1
 * 1A [packet length varint]              Envelope.events
 *    08 [sequence]                       EventPacket.sequence        (left out when 0)
 *    10 [time_base_us]                   EventPacket.time_base_us    (left out when 0)
 *    18 [event_count]                    EventPacket.event_count     (left out when 0)
 *    22 [8 * count] [event bytes]        EventPacket.events          (left out when empty)
 *    2A [id length] [sensor id]          EventPacket.sensor_id
 * </pre>
 *
 * Not thread-safe: one per sender.
 */
final class EnvelopeWriter {
    private final byte[] trailer;
    private final byte[] header = new byte[64];

    EnvelopeWriter(String sensorId) {
        byte[] id = sensorId.getBytes(StandardCharsets.UTF_8);
        trailer = new byte[id.length == 0 ? 0 : 1 + varintSize(id.length) + id.length];
        if (id.length > 0) {
            trailer[0] = 0x2A;
            int at = putVarint(trailer, 1, id.length);
            System.arraycopy(id, 0, trailer, at, id.length);
        }
    }

    /**
     * Fills the header for a packet of {@code count} events and returns its length; the message is
     * header, then {@code 8 * count} event bytes, then {@link #trailer()}.
     *
     * @param delimited true to start with the message's length (TCP), false for a datagram
     */
    int header(boolean delimited, long sequence, long timeBaseUs, int count) {
        long eventBytes = 8L * count;
        long packet = fieldSize(sequence) + fieldSize(timeBaseUs) + fieldSize(count)
                + (count == 0 ? 0 : 1 + varintSize(eventBytes) + eventBytes) + trailer.length;
        long envelope = 2 + 1 + varintSize(packet) + packet;
        int at = 0;
        if (delimited) {
            at = putVarint(header, at, envelope);
        }
        header[at++] = 0x08;
        header[at++] = 0x01;
        header[at++] = 0x1A;
        at = putVarint(header, at, packet);
        if (sequence != 0) {
            header[at++] = 0x08;
            at = putVarint(header, at, sequence);
        }
        if (timeBaseUs != 0) {
            header[at++] = 0x10;
            at = putVarint(header, at, timeBaseUs);
        }
        if (count != 0) {
            header[at++] = 0x18;
            at = putVarint(header, at, count);
            header[at++] = 0x22;
            at = putVarint(header, at, eventBytes);
        }
        return at;
    }

    /** The header bytes filled by the last {@link #header} call. */
    byte[] headerBytes() {
        return header;
    }

    /** The bytes after the events (the sensor id field). */
    byte[] trailer() {
        return trailer;
    }

    /** Writes one whole delimited message to {@code out}. */
    void writeDelimited(OutputStream out, long sequence, long timeBaseUs, byte[] events, int offset, int count)
            throws IOException {
        int n = header(true, sequence, timeBaseUs, count);
        out.write(header, 0, n);
        out.write(events, offset, count * 8);
        out.write(trailer);
    }

    /** Writes one datagram's message into {@code dst} (large enough) and returns its length. */
    int writeDatagram(byte[] dst, long sequence, long timeBaseUs, byte[] events, int offset, int count) {
        int n = header(false, sequence, timeBaseUs, count);
        System.arraycopy(header, 0, dst, 0, n);
        System.arraycopy(events, offset, dst, n, count * 8);
        System.arraycopy(trailer, 0, dst, n + count * 8, trailer.length);
        return n + count * 8 + trailer.length;
    }

    /** One message without length prefix, in an array of its exact size (a Kafka record's value). */
    byte[] message(long sequence, long timeBaseUs, byte[] events, int offset, int count) {
        int n = header(false, sequence, timeBaseUs, count);
        byte[] dst = new byte[n + count * 8 + trailer.length];
        System.arraycopy(header, 0, dst, 0, n);
        System.arraycopy(events, offset, dst, n, count * 8);
        System.arraycopy(trailer, 0, dst, n + count * 8, trailer.length);
        return dst;
    }

    /** Bytes a message takes in a datagram for {@code count} events (at most, for sizing buffers). */
    int datagramSize(int count) {
        return header(false, -1L, -1L, count) + count * 8 + trailer.length; // -1: the longest varint (10 bytes)
    }

    private static long fieldSize(long value) {
        return value == 0 ? 0 : 1 + varintSize(value);
    }

    static int varintSize(long value) {
        int n = 1;
        while ((value & ~0x7FL) != 0) {
            value >>>= 7;
            n++;
        }
        return n;
    }

    private static int putVarint(byte[] dst, int at, long value) {
        while ((value & ~0x7FL) != 0) {
            dst[at++] = (byte) ((value & 0x7F) | 0x80);
            value >>>= 7;
        }
        dst[at++] = (byte) value;
        return at;
    }
}
