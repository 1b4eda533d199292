package dev.afterglow.node.fleet;

import dev.afterglow.node.config.KafkaConfig;
import dev.afterglow.node.pipeline.SensorInput;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.Transport;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.node.wire.Envelopes;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;

/**
 * An edge node's way to the event topic: every message a sensor sends this node over TCP or UDP
 * is written to the topic as it arrived (keyed by sensor, so in order), and each sensor's hello is
 * repeated every {@code hello-repeat-ms} while it sends. Sends never block the ingest thread: a
 * full producer buffer or a refused record drops the message, counted per sensor.
 */
public final class EventForwarder implements AutoCloseable {
    private static final long FORGET_AFTER_NANOS = 60_000_000_000L;
    private final KafkaConfig config;
    private final KafkaProducer<byte[], byte[]> producer;
    /** Sensors that forwarded, with their latest hello and when they last sent anything. */
    private final Map<String, Forwarding> sensors = new ConcurrentHashMap<>();

    EventForwarder(KafkaConfig config, String member) {
        this.config = config;
        this.producer = KafkaClients.producer(config, "edge", member);
        try {
            KafkaClients.awaitMetadata(producer, config.eventTopic);
        } catch (RuntimeException e) {
            producer.close(java.time.Duration.ZERO);
            throw e;
        }
    }

    /** What stands in front of a sensor's pipeline on this edge. */
    public SensorInput wrap(SensorPipeline pipeline) {
        return new Forwarding(pipeline, config.processForwarded);
    }

    /** Sends the hello of every sensor that sent something within two repeat periods. Called every {@code hello-repeat-ms}. */
    void repeatHellos(long nowNanos) {
        long recent = 2L * config.helloRepeatMs * 1_000_000L;
        for (var it = sensors.values().iterator(); it.hasNext();) {
            Forwarding f = it.next();
            SensorHello h = f.hello;
            if (nowNanos - f.lastSentNanos > FORGET_AFTER_NANOS) {
                it.remove(); // silent for a minute (gone, or evicted): its next message starts it again
            } else if (h != null && nowNanos - f.lastSentNanos < recent) {
                f.send(Envelope.newBuilder().setSchemaVersion(Envelopes.SCHEMA_VERSION).setHello(h).build());
            }
        }
    }

    @Override
    public void close() {
        producer.close(java.time.Duration.ofSeconds(5));
    }

    /** One sensor's messages: forwarded, and passed to its pipeline when the edge processes too. */
    private final class Forwarding implements SensorInput {
        private final SensorPipeline pipeline;
        private final boolean process;
        private final byte[] key;
        private final CountedSend sends;
        private volatile SensorHello hello;
        private volatile long lastSentNanos;

        Forwarding(SensorPipeline pipeline, boolean process) {
            this.pipeline = pipeline;
            this.process = process;
            this.key = EventRecords.key(pipeline.id());
            this.sends = new CountedSend(producer, pipeline.counters(), NodeCounter.KAFKA_FORWARDED,
                    NodeCounter.KAFKA_FORWARD_DROPPED, "a message of sensor " + pipeline.id());
        }

        @Override
        public void hello(SensorHello h, long arrivalNanos) {
            hello = h;
            sensors.put(pipeline.id(), this);
            send(Envelope.newBuilder().setSchemaVersion(Envelopes.SCHEMA_VERSION).setHello(h).build());
            pipeline.hello(h, arrivalNanos);
        }

        @Override
        public boolean events(Envelope envelope, long arrivalNanos, Transport transport) {
            startIfNeeded();
            send(envelope);
            return !process || pipeline.events(envelope, arrivalNanos, transport);
        }

        @Override
        public void sensorFrame(Envelope envelope, long arrivalNanos) {
            startIfNeeded();
            send(envelope);
            if (process) {
                pipeline.sensorFrame(envelope, arrivalNanos);
            }
        }

        /**
         * A UDP sensor says no hello: the topic gets one made from its configuration first. A sensor
         * forgotten after a silence is registered again and its hello sent again.
         */
        private void startIfNeeded() {
            if (hello == null) {
                hello = pipeline.configHello();
            }
            if (sensors.putIfAbsent(pipeline.id(), this) == null) {
                send(Envelope.newBuilder().setSchemaVersion(Envelopes.SCHEMA_VERSION).setHello(hello).build());
            }
        }

        void send(Envelope envelope) {
            lastSentNanos = System.nanoTime();
            sends.send(new ProducerRecord<>(config.eventTopic, key, envelope.toByteArray()));
        }
    }
}
