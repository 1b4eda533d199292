package dev.afterglow.node.hostile;

import com.google.protobuf.ByteString;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SyntheticSensor;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SealedDatagram;
import java.io.BufferedOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.DatagramPacket;
import java.net.DatagramSocket;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.nio.charset.StandardCharsets;
import java.security.GeneralSecurityException;
import java.util.concurrent.atomic.AtomicLong;
import javax.crypto.Mac;
import javax.crypto.spec.SecretKeySpec;

/**
 * The legitimate sensor: the project's synthetic parcel-line sensor streamed at real pace from
 * 127.0.0.1, one packet per {@link #PACKET_US} of sensor time, sent when the host clock reaches the
 * packet's end (sensor time 0 = this sensor's start). Over TCP (a hello, then packets), plain UDP,
 * or UDP sealed with the sensor's token (HMAC-SHA256 over the inner envelope, RFC 2104 through the
 * JDK's {@code HmacSHA256}). Counts every event it sends. Over TCP it also listens on its own
 * connection: the node has no reason to write to a sensor or close it, so either is recorded.
 */
final class LegitSensor implements AutoCloseable {
    /** How the sensor reaches the node. */
    enum Transport { TCP, UDP, SEALED_UDP }

    static final int WIDTH = 160;
    static final int HEIGHT = 120;
    static final long PACKET_US = 2_000;
    /** Events per datagram at most (the node's own UDP client keeps 8000 under the 65,507-byte payload limit). */
    private static final int MAX_UDP_EVENTS = 6_000;

    final String id;
    final Transport transport;
    private final String token;
    private final AtomicLong events = new AtomicLong();
    private final AtomicLong packets = new AtomicLong();
    private final long startNanos;
    private final Socket tcp;
    private final OutputStream tcpOut;
    private final DatagramSocket udp;
    private final InetSocketAddress udpTarget;
    private final Thread sender;
    private volatile Thread listener;
    private volatile boolean running = true;
    private volatile long lateStartUs;
    private volatile long lateStartDelayUs;
    private volatile Throwable failure;
    private volatile String nodeInterfered;

    private LegitSensor(HostileNode node, String id, Transport transport, String token) throws IOException {
        this.id = id;
        this.transport = transport;
        this.token = token;
        InetAddress loopback = InetAddress.getLoopbackAddress();
        if (transport == Transport.TCP) {
            tcp = new Socket();
            tcp.setTcpNoDelay(true);
            tcp.bind(new InetSocketAddress(loopback, 0));
            tcp.connect(new InetSocketAddress(loopback, node.ingestTcpPort), 5_000);
            tcpOut = new BufferedOutputStream(tcp.getOutputStream(), 1 << 16);
            tcpOut.write(Wire.delimited(Wire.hello(id, WIDTH, HEIGHT, token)));
            tcpOut.flush();
            udp = null;
            udpTarget = null;
        } else {
            tcp = null;
            tcpOut = null;
            udp = new DatagramSocket(new InetSocketAddress(loopback, 0));
            udpTarget = new InetSocketAddress(loopback, node.ingestUdpPort);
        }
        startNanos = System.nanoTime();
        sender = new Thread(this::run, "legit-sensor-" + id);
        sender.setDaemon(true);
    }

    /** Connects and starts streaming. */
    static LegitSensor start(HostileNode node, String id, Transport transport, String token) throws IOException {
        return start(node, id, transport, token, 0, 0);
    }

    /**
     * Connects and starts streaming; the packets of the first {@code lateForUs} of sensor time leave
     * {@code delayUs} late (a congested path at start), the rest on time.
     */
    static LegitSensor start(HostileNode node, String id, Transport transport, String token, long lateForUs, long delayUs)
            throws IOException {
        LegitSensor s = new LegitSensor(node, id, transport, token);
        s.lateStartUs = lateForUs;
        s.lateStartDelayUs = delayUs;
        if (s.tcp != null) {
            s.listener = new Thread(s::listen, "legit-sensor-listen-" + id);
            s.listener.setDaemon(true);
            s.listener.start();
        }
        s.sender.start();
        return s;
    }

    /** This sensor's current time in microseconds (its clock started with it). */
    long nowUs() {
        return (System.nanoTime() - startNanos) / 1_000;
    }

    /** Events sent so far. */
    long eventsSent() {
        return events.get();
    }

    /** Packets sent so far. */
    long packetsSent() {
        return packets.get();
    }

    /** Why sending stopped early, or null. */
    Throwable failure() {
        return failure;
    }

    /** What the node did to this sensor's TCP connection (wrote to it, closed it), or null. */
    String nodeInterfered() {
        return nodeInterfered;
    }

    private void run() {
        SyntheticSensor scene = new SyntheticSensor(SceneKind.PARCEL_LINE.create(WIDTH, HEIGHT, 7),
                SceneKind.PARCEL_LINE.sensor(WIDTH, HEIGHT).seed(7).build());
        EventBatch batch = new EventBatch(1 << 16);
        long seq = 0;
        try {
            while (running) {
                long t = scene.timeUs();
                batch.reset(t);
                scene.step(t + PACKET_US, batch);
                long dueUs = scene.timeUs() + (scene.timeUs() <= lateStartUs ? lateStartDelayUs : 0);
                long wait = startNanos + dueUs * 1_000 - System.nanoTime();
                if (wait > 0) {
                    Thread.sleep(wait / 1_000_000, (int) (wait % 1_000_000));
                }
                while (scene.pollFrame() != null) {
                    // the sensor's own frames are not sent
                }
                if (batch.size == 0) {
                    continue;
                }
                if (transport == Transport.TCP) {
                    tcpOut.write(Wire.delimited(envelope(seq++, batch, 0, batch.size)));
                    tcpOut.flush();
                    packets.incrementAndGet();
                } else {
                    for (int from = 0; from < batch.size; from += MAX_UDP_EVENTS) {
                        int to = Math.min(batch.size, from + MAX_UDP_EVENTS);
                        byte[] bytes = datagram(envelope(seq++, batch, from, to));
                        udp.send(new DatagramPacket(bytes, bytes.length, udpTarget));
                        packets.incrementAndGet();
                    }
                }
                events.addAndGet(batch.size);
            }
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        } catch (IOException | RuntimeException | GeneralSecurityException e) {
            if (running) {
                failure = e;
            }
        }
    }

    /** The packet of events [from, to) of the batch, with its time base at the batch's. */
    private Envelope envelope(long seq, EventBatch batch, int from, int to) {
        EventBatch part = batch;
        if (from != 0 || to != batch.size) {
            part = new EventBatch(to - from);
            part.reset(batch.timeBaseUs);
            for (int i = from; i < to; i++) {
                part.add(batch.x[i], batch.y[i], batch.timeUs(i), batch.p[i]);
            }
        }
        return Envelope.newBuilder().setSchemaVersion(Wire.SCHEMA).setEvents(EventPacket.newBuilder()
                .setSensorId(id)
                .setSequence(seq)
                .setTimeBaseUs(part.timeBaseUs)
                .setEventCount(part.size)
                .setEvents(ByteString.copyFrom(EventPacketCodec.encode(part)))).build();
    }

    private byte[] datagram(Envelope inner) throws GeneralSecurityException {
        byte[] bytes = inner.toByteArray();
        if (transport != Transport.SEALED_UDP) {
            return bytes;
        }
        return seal(id, bytes, token);
    }

    /** A sealed datagram: {@code inner} with its HMAC-SHA256 under {@code key} (UTF-8). */
    static byte[] seal(String sensorId, byte[] inner, String key) throws GeneralSecurityException {
        Mac mac = Mac.getInstance("HmacSHA256");
        mac.init(new SecretKeySpec(key.getBytes(StandardCharsets.UTF_8), "HmacSHA256"));
        return Envelope.newBuilder().setSchemaVersion(Wire.SCHEMA).setSealed(SealedDatagram.newBuilder()
                .setSensorId(sensorId)
                .setEnvelope(ByteString.copyFrom(inner))
                .setHmacSha256(ByteString.copyFrom(mac.doFinal(inner)))).build().toByteArray();
    }

    private void listen() {
        try {
            InputStream in = tcp.getInputStream();
            try {
                Envelope e = Wire.read(in, 1 << 20);
                if (running) {
                    nodeInterfered = "the node wrote to the legitimate sensor's connection: " + e;
                }
            } catch (java.io.EOFException end) {
                if (running) {
                    nodeInterfered = "the node closed the legitimate sensor's connection";
                }
            }
        } catch (IOException e) {
            if (running) {
                nodeInterfered = "the legitimate sensor's connection failed: " + e;
            }
        }
    }

    /** Stops sending (the connection stays open until {@link #close()}). */
    void stop() throws InterruptedException {
        running = false;
        sender.join(5_000);
    }

    @Override
    public void close() throws IOException, InterruptedException {
        running = false;
        sender.interrupt();
        sender.join(5_000);
        if (tcp != null) {
            tcp.close();
        }
        if (udp != null) {
            udp.close();
        }
    }
}
