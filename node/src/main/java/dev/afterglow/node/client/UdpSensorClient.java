package dev.afterglow.node.client;

import dev.afterglow.filters.EventBatch;
import com.google.protobuf.ByteString;
import dev.afterglow.node.ingest.DatagramSeal;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SealedDatagram;
import java.io.IOException;
import java.net.DatagramPacket;
import java.net.DatagramSocket;
import java.net.InetSocketAddress;

/**
 * Sends one sensor's events to a node over UDP, one envelope per datagram. The sensor must be
 * known to the node (listed in its configuration, or introduced by a TCP hello); a sensor with a
 * token must seal its datagrams ({@link #UdpSensorClient(String, int, String, String)}). A batch larger
 * than {@link #MAX_EVENTS_PER_DATAGRAM} is split over several datagrams. Blocking; one thread.
 */
public final class UdpSensorClient implements AutoCloseable {
    /** Keeps a datagram under the 65,507-byte UDP payload limit with room for the envelope. */
    public static final int MAX_EVENTS_PER_DATAGRAM = 8000;

    private final DatagramSocket socket;
    private final InetSocketAddress target;
    private final String sensorId;
    private final EventBatch part = new EventBatch(MAX_EVENTS_PER_DATAGRAM);
    private final String token;
    private final DatagramSeal seal = new DatagramSeal();
    private long sequence;

    /** A client for a sensor without a token (plain datagrams). */
    public UdpSensorClient(String host, int port, String sensorId) throws IOException {
        this(host, port, sensorId, "");
    }

    /** A client that seals every datagram with the sensor's {@code token} (empty: plain datagrams). */
    public UdpSensorClient(String host, int port, String sensorId, String token) throws IOException {
        this.socket = new DatagramSocket();
        this.target = new InetSocketAddress(host, port);
        this.sensorId = sensorId;
        this.token = token;
    }

    /** Sends the batch in as many datagrams as needed. */
    public void sendEvents(EventBatch batch) throws IOException {
        for (int start = 0; start < batch.size; start += MAX_EVENTS_PER_DATAGRAM) {
            int end = Math.min(batch.size, start + MAX_EVENTS_PER_DATAGRAM);
            part.reset(batch.timeBaseUs);
            for (int i = start; i < end; i++) {
                part.add(batch.x[i], batch.y[i], batch.timeUs(i), batch.p[i]);
            }
            sendEnvelope(Envelope.newBuilder().setSchemaVersion(SensorClient.SCHEMA_VERSION)
                    .setEvents(SensorClient.packet(sensorId, sequence++, part)).build());
        }
    }

    /** Sends one envelope as a datagram, sealed if this client has a token (for tests and tools). */
    public void sendEnvelope(Envelope envelope) throws IOException {
        byte[] bytes = token.isEmpty() ? envelope.toByteArray() : sealed(sensorId, token, envelope, seal).toByteArray();
        socket.send(new DatagramPacket(bytes, bytes.length, target));
    }

    /** {@code inner} wrapped in a sealed datagram for {@code sensorId} under {@code token}. */
    public static Envelope sealed(String sensorId, String token, Envelope inner, DatagramSeal seal) {
        ByteString bytes = inner.toByteString();
        return Envelope.newBuilder().setSchemaVersion(SensorClient.SCHEMA_VERSION)
                .setSealed(SealedDatagram.newBuilder().setSensorId(sensorId).setEnvelope(bytes)
                        .setHmacSha256(ByteString.copyFrom(seal.tag(token, bytes))))
                .build();
    }

    /** Next sequence number to be used. */
    public long nextSequence() {
        return sequence;
    }

    @Override
    public void close() {
        socket.close();
    }
}
