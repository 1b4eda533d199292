package dev.afterglow.node.hostile;

import com.google.protobuf.ByteString;
import dev.afterglow.proto.v1.ClockDescription;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorHello;
import java.io.ByteArrayOutputStream;
import java.io.EOFException;
import java.io.IOException;
import java.io.InputStream;

/**
 * Envelopes framed by hand. A TCP stream is a sequence of envelopes each preceded by its length as
 * a base-128 varint (protobuf encoding guide, "Base 128 Varints"; the schema's header comment);
 * an event record is 8 little-endian bytes {@code dt:u32, x:u16, (p<<15 | y):u16} as drawn in
 * afterglow.proto. Written here rather than taken from the node's clients, so an attack goes to the
 * node byte for byte as the test means it.
 */
final class Wire {
    /** Schema version 1, as every envelope carries it. */
    static final int SCHEMA = 1;

    private Wire() {
    }

    /** {@code value} as an unsigned base-128 varint, least significant group first. */
    static byte[] varint(long value) {
        ByteArrayOutputStream out = new ByteArrayOutputStream(10);
        long v = value;
        while ((v & ~0x7FL) != 0) {
            out.write((int) ((v & 0x7F) | 0x80));
            v >>>= 7;
        }
        out.write((int) v);
        return out.toByteArray();
    }

    /** The envelope's bytes behind their varint length prefix. */
    static byte[] delimited(Envelope e) {
        byte[] body = e.toByteArray();
        byte[] prefix = varint(body.length);
        byte[] out = new byte[prefix.length + body.length];
        System.arraycopy(prefix, 0, out, 0, prefix.length);
        System.arraycopy(body, 0, out, prefix.length, body.length);
        return out;
    }

    /** A hello for sensor {@code id} of {@code width x height}, with {@code token} if not null. */
    static Envelope hello(String id, int width, int height, String token) {
        SensorHello.Builder h = SensorHello.newBuilder().setSensorId(id).setWidth(width).setHeight(height)
                .setClock(ClockDescription.newBuilder().setSource("hostile-suite").setTickNs(1000));
        if (token != null) {
            h.setToken(token);
        }
        return Envelope.newBuilder().setSchemaVersion(SCHEMA).setHello(h).build();
    }

    /** An event packet with the given header fields and raw event bytes, unchecked. */
    static Envelope packet(String sensorId, long sequence, long timeBaseUs, int eventCount, byte[] events) {
        return Envelope.newBuilder().setSchemaVersion(SCHEMA).setEvents(EventPacket.newBuilder()
                .setSensorId(sensorId)
                .setSequence(sequence)
                .setTimeBaseUs(timeBaseUs)
                .setEventCount(eventCount)
                .setEvents(ByteString.copyFrom(events))).build();
    }

    /** One 8-byte event record. */
    static byte[] event(long dt, int x, int y, boolean on) {
        byte[] b = new byte[8];
        b[0] = (byte) dt;
        b[1] = (byte) (dt >>> 8);
        b[2] = (byte) (dt >>> 16);
        b[3] = (byte) (dt >>> 24);
        b[4] = (byte) x;
        b[5] = (byte) (x >>> 8);
        int yp = (y & 0x7FFF) | (on ? 0x8000 : 0);
        b[6] = (byte) yp;
        b[7] = (byte) (yp >>> 8);
        return b;
    }

    /**
     * Reads one length-prefixed envelope; a prefix above {@code maxBytes} is an error.
     *
     * @throws EOFException if the stream ends before a whole envelope
     */
    static Envelope read(InputStream in, int maxBytes) throws IOException {
        long length = 0;
        int shift = 0;
        while (true) {
            int b = in.read();
            if (b < 0) {
                throw new EOFException(shift == 0 ? "closed" : "closed inside a length prefix");
            }
            length |= (long) (b & 0x7F) << shift;
            if ((b & 0x80) == 0) {
                break;
            }
            shift += 7;
            if (shift > 35) {
                throw new IOException("length prefix longer than 5 bytes");
            }
        }
        if (length > maxBytes) {
            throw new IOException("message of " + length + " bytes > " + maxBytes);
        }
        byte[] body = in.readNBytes((int) length);
        if (body.length < length) {
            throw new EOFException("closed inside a message of " + length + " bytes");
        }
        return Envelope.parseFrom(body);
    }

    /** Parses length-prefixed envelopes from a complete byte array (what a connection received before it closed). */
    static java.util.List<Envelope> readAll(byte[] bytes) throws IOException {
        java.io.ByteArrayInputStream in = new java.io.ByteArrayInputStream(bytes);
        java.util.List<Envelope> out = new java.util.ArrayList<>();
        while (in.available() > 0) {
            out.add(read(in, 1 << 20));
        }
        return out;
    }
}
