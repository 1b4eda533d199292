package dev.afterglow.node.fleet;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import java.util.Map;
import java.util.concurrent.Future;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;

/**
 * A sensor that produces straight to the event topic, as a sensor-side process would, following
 * the documented record layout (key: sensor id; value: the envelope; hello first).
 */
final class TopicSensor implements AutoCloseable {
    private final KafkaProducer<byte[], byte[]> producer;
    private final String topic;

    TopicSensor(String bootstrap, String topic) {
        this.producer = new KafkaProducer<>(Map.of("bootstrap.servers", bootstrap, "linger.ms", 0, "acks", "all"),
                new ByteArraySerializer(), new ByteArraySerializer());
        this.topic = topic;
    }

    void hello(String sensorId, int width, int height) {
        send(sensorId, Envelope.newBuilder().setSchemaVersion(Envelopes.SCHEMA_VERSION)
                .setHello(SensorClient.hello(sensorId, width, height, false, "")).build());
    }

    Future<?> events(String sensorId, long sequence, EventBatch batch) {
        return send(sensorId, packet(sensorId, sequence, batch));
    }

    /** An event packet whose record says it was made at {@code createdMs} (wall clock). */
    Future<?> eventsMadeAt(String sensorId, long sequence, EventBatch batch, long createdMs) {
        return producer.send(new ProducerRecord<>(topic, null, createdMs, EventRecords.key(sensorId),
                packet(sensorId, sequence, batch).toByteArray()));
    }

    private static Envelope packet(String sensorId, long sequence, EventBatch batch) {
        return Envelope.newBuilder().setSchemaVersion(Envelopes.SCHEMA_VERSION)
                .setEvents(SensorClient.packet(sensorId, sequence, batch)).build();
    }

    Future<?> send(String sensorId, Envelope e) {
        return producer.send(EventRecords.of(topic, sensorId, e));
    }

    /** A raw record: any key, any bytes (hostile producers). */
    void raw(byte[] key, byte[] value) {
        producer.send(new ProducerRecord<>(topic, key, value));
    }

    void flush() {
        producer.flush();
    }

    @Override
    public void close() {
        producer.close();
    }
}
