package dev.afterglow.node.client;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.proto.v1.ClockDescription;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.ErrorReport;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorFrame;
import dev.afterglow.proto.v1.SensorHello;
import com.google.protobuf.UnsafeByteOperations;
import java.io.BufferedOutputStream;
import java.io.IOException;
import java.io.OutputStream;
import java.net.Socket;

/**
 * Streams one sensor's events and frames to a node over TCP: a hello, then delimited envelopes.
 * Blocking; one thread at a time. With {@link ClientTls} the connection uses TLS.
 *
 * <pre>
 * try (SensorClient c = SensorClient.connect("127.0.0.1", 7301, "dock-cam", 640, 480, false)) {
 *     c.sendEvents(batch);   // an EventBatch of this sensor's events
 * }
 * </pre>
 */
public final class SensorClient implements AutoCloseable {
    /** Schema version written into every envelope. */
    public static final int SCHEMA_VERSION = 1;

    private final Socket socket;
    private final OutputStream out;
    /** Reused by {@link #sendSerialized}. */
    private byte[] scratch = new byte[1 << 16];
    private final String sensorId;
    private long sequence;

    private SensorClient(Socket socket, String sensorId) throws IOException {
        this.socket = socket;
        this.out = new BufferedOutputStream(socket.getOutputStream(), 1 << 16);
        this.sensorId = sensorId;
    }

    /** Connects and sends the hello. */
    public static SensorClient connect(String host, int port, String sensorId, int width, int height, boolean sendsFrames)
            throws IOException {
        return connect(host, port, hello(sensorId, width, height, sendsFrames, ""), null);
    }

    /** Connects (over TLS unless {@code tls} is null) and sends the hello. */
    public static SensorClient connect(String host, int port, String sensorId, int width, int height, boolean sendsFrames,
            ClientTls tls) throws IOException {
        return connect(host, port, hello(sensorId, width, height, sendsFrames, ""), tls);
    }

    /** Connects and sends {@code hello} (for a sensor with a token: {@link #hello} with the token). */
    public static SensorClient connect(String host, int port, SensorHello hello) throws IOException {
        return connect(host, port, hello, null);
    }

    /** Connects (over TLS unless {@code tls} is null) and sends {@code hello}. */
    public static SensorClient connect(String host, int port, SensorHello hello, ClientTls tls) throws IOException {
        Socket s = ClientTls.open(host, port, tls);
        SensorClient c = new SensorClient(s, hello.getSensorId());
        c.send(Envelope.newBuilder().setSchemaVersion(SCHEMA_VERSION).setHello(hello).build());
        c.flush();
        return c;
    }

    /** A hello with a microsecond sensor clock; {@code token} may be empty. */
    public static SensorHello hello(String sensorId, int width, int height, boolean sendsFrames, String token) {
        return SensorHello.newBuilder()
                .setSensorId(sensorId).setWidth(width).setHeight(height).setSendsFrames(sendsFrames).setToken(token)
                .setClock(ClockDescription.newBuilder().setSource("sensor").setTickNs(1000)).build();
    }

    /**
     * Waits up to {@code timeoutMillis} for the node to answer: its error report if it refused or
     * ended the connection with one, or null if it said nothing (the normal case: the node only
     * speaks to refuse).
     */
    public ErrorReport awaitError(int timeoutMillis) throws IOException {
        flush();
        socket.setSoTimeout(timeoutMillis);
        try {
            Envelope e = Envelope.parseDelimitedFrom(socket.getInputStream());
            return e != null && e.hasError() ? e.getError() : null;
        } catch (java.net.SocketTimeoutException e) {
            return null;
        } finally {
            socket.setSoTimeout(0);
        }
    }

    /** Sends the batch's events as one packet (sequence numbers are assigned here); not flushed. */
    public void sendEvents(EventBatch batch) throws IOException {
        send(Envelope.newBuilder().setSchemaVersion(SCHEMA_VERSION).setEvents(packet(sensorId, sequence++, batch)).build());
    }

    /** Sends a sensor frame; not flushed. */
    public void sendFrame(SensorFrame frame) throws IOException {
        send(Envelope.newBuilder().setSchemaVersion(SCHEMA_VERSION).setSensorFrame(frame).build());
    }

    /** Sends any envelope as is (for tests and tools); not flushed. */
    public void send(Envelope envelope) throws IOException {
        envelope.writeDelimitedTo(out);
    }

    /** Sends an envelope already serialized (e.g. from a recording) with its length prefix; not flushed. */
    public void sendSerialized(com.google.protobuf.ByteString envelope) throws IOException {
        int n = envelope.size();
        while ((n & ~0x7F) != 0) { // base-128 varint, as writeDelimitedTo writes it
            out.write((n & 0x7F) | 0x80);
            n >>>= 7;
        }
        out.write(n);
        // ByteString.writeTo(OutputStream) hands out a fresh copy each time; one reused buffer is cheaper
        if (scratch.length < envelope.size()) {
            scratch = new byte[Math.max(envelope.size(), 2 * scratch.length)];
        }
        envelope.copyTo(scratch, 0);
        out.write(scratch, 0, envelope.size());
    }

    /** Writes buffered messages to the socket. */
    public void flush() throws IOException {
        out.flush();
    }

    /** Builds the packet for a batch. */
    public static EventPacket packet(String sensorId, long sequence, EventBatch batch) {
        return EventPacket.newBuilder()
                .setSensorId(sensorId)
                .setSequence(sequence)
                .setTimeBaseUs(batch.timeBaseUs)
                .setEventCount(batch.size)
                .setEvents(UnsafeByteOperations.unsafeWrap(EventPacketCodec.encode(batch)))
                .build();
    }

    @Override
    public void close() throws IOException {
        try {
            out.flush();
        } finally {
            socket.close();
        }
    }
}
