package dev.afterglow.node.surge;

import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.proto.v1.ClockDescription;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import java.io.BufferedOutputStream;
import java.io.IOException;
import java.io.OutputStream;
import java.net.DatagramPacket;
import java.net.DatagramSocket;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.util.Properties;
import java.util.concurrent.locks.LockSupport;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;

/**
 * One synthetic sensor of the load generator: streams the spans of a {@link PacketPlan} to the node
 * through a lean blocking-socket writer ({@link EnvelopeWriter} around the plan's stored bytes; the
 * Java {@code SensorClient} re-encodes every batch, which costs more than the node's own decoding).
 * Over TCP it opens with a hello; over UDP the node must already know the sensor.
 *
 * <p><b>Time.</b> Sensor time is host monotonic time in microseconds ({@link System#nanoTime()} / 1000),
 * so it never goes back between steps or runs. A paced span covering sensor time [b, b + span) is sent
 * when the host clock reaches b + span, like a sensor that sends a packet once its time has passed;
 * the pace is held against {@code System.nanoTime()} from the phase start, so it does not drift. In a
 * {@code max} phase spans go out back to back and each span ends at the host time it is sent (or
 * right after the previous one), so sensor time never runs ahead of the host clock and the node's
 * clock mapping stays valid for the steps after it.
 *
 * <p><b>Send log.</b> Before a span's first byte is written, its start and the host time are
 * appended to a ring ({@link #sentAtNanos}), read by the subscriber probes to time frames on the
 * generator's own clock. The ring has one writer (the sending thread) and publishes entries through
 * a volatile count.
 *
 * <p>Threading: {@link #run} is called by one thread at a time; {@link #sentAtNanos} and the window
 * accessors from any thread.
 */
final class SensorSender implements AutoCloseable {
    /** Largest packet over TCP: 512 KiB of events, far below the node's default message limit. */
    static final int TCP_CHUNK_EVENTS = 65_536;
    /** Largest packet over UDP: what fits one datagram. */
    static final int UDP_CHUNK_EVENTS = UdpSensorClient.MAX_EVENTS_PER_DATAGRAM;
    private static final int RING = 1 << 18;

    private final String id;
    private final int index;
    private final Socket socket;
    private final OutputStream out;
    private final DatagramSocket datagrams;
    private final DatagramPacket datagram;
    private final byte[] datagramBuffer;
    private final EnvelopeWriter writer;
    private final int chunkEvents;
    /** Kafka: the producer and topic the sensor writes its records to; null otherwise. */
    private final KafkaProducer<byte[], byte[]> producer;
    private final String topic;
    private final byte[] key;

    private final long[] ringStartUs = new long[RING];
    private final long[] ringSentNs = new long[RING];
    private volatile long logged;
    private volatile long spanUs = 1;

    private volatile long windowStartUs = Long.MAX_VALUE;
    private volatile long windowEndUs = Long.MAX_VALUE;

    private long sequence;
    private long nextSensorUs;
    private PacketPlan plan;
    private int cursor;
    private int filled;

    private SensorSender(String id, int index, Socket socket, DatagramSocket datagrams, InetSocketAddress target)
            throws IOException {
        this(id, index, socket, datagrams, target, null, null);
    }

    private SensorSender(String id, int index, Socket socket, DatagramSocket datagrams, InetSocketAddress target,
            KafkaProducer<byte[], byte[]> producer, String topic) throws IOException {
        this.producer = producer;
        this.topic = topic;
        this.key = id.getBytes(java.nio.charset.StandardCharsets.UTF_8);
        this.id = id;
        this.index = index;
        this.socket = socket;
        this.out = socket == null ? null : new BufferedOutputStream(socket.getOutputStream(), 1 << 16);
        this.datagrams = datagrams;
        this.writer = new EnvelopeWriter(id);
        this.chunkEvents = datagrams != null ? UDP_CHUNK_EVENTS : TCP_CHUNK_EVENTS;
        this.datagramBuffer = datagrams == null ? null : new byte[writer.datagramSize(UDP_CHUNK_EVENTS)];
        this.datagram = datagrams == null ? null : new DatagramPacket(datagramBuffer, 0, target);
    }

    /** Connects over TCP and sends the hello. */
    static SensorSender tcp(String host, int port, String id, int index, int width, int height) throws IOException {
        Socket s = new Socket();
        s.setTcpNoDelay(true);
        s.setSendBufferSize(1 << 20);
        s.connect(new InetSocketAddress(host, port), 5_000);
        SensorSender sender = new SensorSender(id, index, s, null, null);
        Envelope.newBuilder().setSchemaVersion(SensorClient.SCHEMA_VERSION).setHello(SensorHello.newBuilder()
                .setSensorId(id).setWidth(width).setHeight(height)
                .setClock(ClockDescription.newBuilder().setSource("host-monotonic").setTickNs(1000)))
                .build().writeDelimitedTo(sender.out);
        sender.out.flush();
        return sender;
    }

    /** Opens a UDP socket towards the node. */
    static SensorSender udp(String host, int port, String id, int index) throws IOException {
        DatagramSocket d = new DatagramSocket();
        d.setSendBufferSize(1 << 20);
        return new SensorSender(id, index, null, d, new InetSocketAddress(host, port));
    }

    /**
     * Produces to the event topic as a sensor-side process would (record layout of the fleet: key
     * the sensor id, value the envelope), starting with the hello. The producer batches for
     * throughput (linger 5 ms, 1 MiB batches).
     */
    static SensorSender kafka(String bootstrap, String topic, String id, int index, int width, int height) throws IOException {
        dev.afterglow.node.fleet.KafkaLogging.quiet();
        Properties p = new Properties();
        p.put("bootstrap.servers", bootstrap);
        p.put("linger.ms", "5");
        p.put("batch.size", String.valueOf(1 << 20));
        // A small buffer: when the broker cannot keep up, send() blocks and the offered rate drops
        // (as a TCP sender's socket pushes back), instead of records ageing in the producer.
        p.put("buffer.memory", String.valueOf(16L << 20));
        p.put("max.request.size", String.valueOf(8 << 20));
        p.put("acks", "1");
        p.put("enable.idempotence", "false");
        KafkaProducer<byte[], byte[]> producer = new KafkaProducer<>(p, new ByteArraySerializer(), new ByteArraySerializer());
        SensorSender sender = new SensorSender(id, index, null, null, null, producer, topic);
        byte[] hello = Envelope.newBuilder().setSchemaVersion(SensorClient.SCHEMA_VERSION).setHello(SensorHello.newBuilder()
                .setSensorId(id).setWidth(width).setHeight(height)
                .setClock(ClockDescription.newBuilder().setSource("host-monotonic").setTickNs(1000)))
                .build().toByteArray();
        try {
            producer.send(new ProducerRecord<>(topic, sender.key, hello)).get(15, java.util.concurrent.TimeUnit.SECONDS);
        } catch (Exception e) {
            producer.close();
            throw new IOException("cannot produce to " + topic + " on " + bootstrap + ": " + e, e);
        }
        return sender;
    }

    String id() {
        return id;
    }

    /** What one phase sent. */
    record Phase(long events, long packets, long spans, long startNs, long lastSendNs, long firstSensorUs, long endSensorUs) {
        /** Host seconds from the phase start to its last send. */
        double seconds() {
            return (lastSendNs - startNs) * 1e-9;
        }
    }

    /**
     * Sends spans of {@code next} for {@code durationNs}: paced at the plan's rate, or back to back
     * when {@code paced} is false. With {@code measured}, frames whose sensor time falls in the
     * phase's span of sensor time are counted by the probes ({@link #inWindow}).
     */
    Phase run(PacketPlan next, long durationNs, boolean paced, boolean measured) throws IOException {
        if (next != plan) {
            plan = next;
            // Sensors start at different places of the loop so they do not send identical packets.
            cursor = (int) ((long) next.spans() * index / 16);
            filled = next.filledAtOrAfter(cursor);
            spanUs = next.spanUs();
        }
        long span = next.spanUs();
        long startNs = System.nanoTime();
        long endNs = startNs + durationNs;
        long baseUs = Math.max(nextSensorUs, startNs / 1000 - (paced ? 0 : span));
        if (measured) {
            windowEndUs = Long.MAX_VALUE;
            windowStartUs = baseUs;
        }
        long events = 0;
        long packets = 0;
        long k = 0;
        long spanStartUs = baseUs;
        long lastSendNs = startNs;
        byte[] bytes = next.bytes();
        while (true) {
            if (paced) {
                long dueNs = startNs + (k + 1) * span * 1000;
                if (dueNs > endNs) {
                    break;
                }
                waitUntil(dueNs);
                spanStartUs = baseUs + k * span;
            } else {
                long now = System.nanoTime();
                if (now >= endNs) {
                    break;
                }
                spanStartUs = k == 0 ? baseUs : Math.max(spanStartUs + span, now / 1000 - span);
            }
            lastSendNs = System.nanoTime();
            log(spanStartUs, lastSendNs);
            if (filled < next.filledSpans() && next.spanOf(filled) == cursor) {
                int from = next.firstEvent(filled);
                int to = next.firstEvent(filled + 1);
                for (int a = from; a < to; a += chunkEvents) {
                    int count = Math.min(chunkEvents, to - a);
                    send(spanStartUs, bytes, a * 8, count);
                    packets++;
                }
                events += to - from;
                filled++;
            }
            if (out != null) {
                out.flush();
            }
            if (++cursor == next.spans()) {
                cursor = 0;
                filled = 0;
            }
            k++;
        }
        if (k > 0) {
            nextSensorUs = spanStartUs + span;
        }
        if (measured) {
            windowEndUs = nextSensorUs;
        }
        return new Phase(events, packets, k, startNs, lastSendNs, baseUs, nextSensorUs);
    }

    private void send(long timeBaseUs, byte[] bytes, int offset, int count) throws IOException {
        long seq = sequence++;
        if (out != null) {
            writer.writeDelimited(out, seq, timeBaseUs, bytes, offset, count);
        } else if (producer != null) {
            producer.send(new ProducerRecord<>(topic, key, writer.message(seq, timeBaseUs, bytes, offset, count)));
        } else {
            int n = writer.writeDatagram(datagramBuffer, seq, timeBaseUs, bytes, offset, count);
            datagram.setLength(n);
            datagrams.send(datagram);
        }
    }

    private static void waitUntil(long dueNs) {
        for (long left = dueNs - System.nanoTime(); left > 0; left = dueNs - System.nanoTime()) {
            LockSupport.parkNanos(left);
        }
    }

    private void log(long spanStartUs, long sentNs) {
        long n = logged;
        int slot = (int) (n & (RING - 1));
        ringStartUs[slot] = spanStartUs;
        ringSentNs[slot] = sentNs;
        logged = n + 1; // volatile write publishes the slot
    }

    /**
     * Host time (System.nanoTime) at which the span holding sensor time {@code sensorUs} (or, if it
     * fell between spans, the first span after it) was handed to the socket; -1 if not in the log.
     */
    long sentAtNanos(long sensorUs) {
        long n = logged;
        long span = spanUs;
        long lo = Math.max(0, n - RING + 1024); // leave room for the writer moving on meanwhile
        long hi = n;
        while (lo < hi) { // first entry whose span ends after sensorUs
            long mid = (lo + hi) >>> 1;
            if (ringStartUs[(int) (mid & (RING - 1))] + span > sensorUs) {
                hi = mid;
            } else {
                lo = mid + 1;
            }
        }
        if (lo == n || lo < Math.max(0, n - RING + 1024)) {
            return -1;
        }
        long sent = ringSentNs[(int) (lo & (RING - 1))];
        return logged - lo < RING ? sent : -1;
    }

    /** True if sensor time {@code sensorUs} lies in the current measured window. */
    boolean inWindow(long sensorUs) {
        return sensorUs >= windowStartUs && sensorUs < windowEndUs;
    }

    /** Ends the measured window (frames after this are not counted). */
    void closeWindow() {
        windowStartUs = Long.MAX_VALUE;
        windowEndUs = Long.MAX_VALUE;
    }

    @Override
    public void close() throws IOException {
        if (socket != null) {
            try {
                out.flush();
            } finally {
                socket.close();
            }
        }
        if (datagrams != null) {
            datagrams.close();
        }
        if (producer != null) {
            producer.close(java.time.Duration.ofSeconds(5));
        }
    }
}
