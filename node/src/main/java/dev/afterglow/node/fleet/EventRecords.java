package dev.afterglow.node.fleet;

import dev.afterglow.proto.v1.Envelope;
import java.nio.charset.StandardCharsets;
import java.util.regex.Pattern;
import org.apache.kafka.clients.producer.ProducerRecord;

/**
 * The record layout of the event and frame topics, the contract for anyone who produces or
 * consumes them directly:
 * <ul>
 * <li>key: the sensor id in UTF-8 (1 to 64 of {@code A-Z a-z 0-9 . _ : -}); Kafka's default
 * partitioner keeps one sensor's records in one partition, in order;
 * <li>value: one {@code afterglow.v1.Envelope} in protobuf binary, exactly the message a sensor
 * sends over TCP without its length prefix: a hello, an event packet or a sensor frame on the
 * event topic, an intensity frame on the frame topic; the sensor id inside must equal the key;
 * <li>timestamp: the producer's create time (or the broker's log-append time); a processing node
 * skips records older than the sensor's latency budget plus the transit allowance;
 * <li>no headers are needed on the event topic; frame records carry {@value #MEMBER_HEADER}: the
 * name of the node that made the frame (a sensor's frames change node when the group moves it,
 * and its frame sequence starts again there).
 * </ul>
 * A producer must send the sensor's hello first and repeat it (the edge does every
 * {@code kafka.hello-repeat-ms}), so that a node that takes the sensor over mid-stream can start it.
 */
public final class EventRecords {
    /** Header of frame records naming the node that made the frame. */
    public static final String MEMBER_HEADER = "afterglow-member";
    private static final Pattern SENSOR_ID = Pattern.compile("[A-Za-z0-9._:-]{1,64}");

    private EventRecords() {
    }

    /** A record of {@code envelope} for {@code sensorId} on {@code topic}. */
    public static ProducerRecord<byte[], byte[]> of(String topic, String sensorId, Envelope envelope) {
        return new ProducerRecord<>(topic, key(sensorId), envelope.toByteArray());
    }

    /** The key of a sensor's records. */
    public static byte[] key(String sensorId) {
        return sensorId.getBytes(StandardCharsets.UTF_8);
    }

    /** The sensor id a key names, or null if it is not a sensor id (from the wire: untrusted). */
    public static String sensorId(byte[] key) {
        if (key == null || key.length < 1 || key.length > 64) {
            return null;
        }
        String id = new String(key, StandardCharsets.UTF_8);
        return SENSOR_ID.matcher(id).matches() ? id : null;
    }

    /** The sensor id inside a sensor's message, or null for a message a sensor does not send. */
    public static String sensorIdInside(Envelope e) {
        return switch (e.getBodyCase()) {
            case HELLO -> e.getHello().getSensorId();
            case EVENTS -> e.getEvents().getSensorId();
            case SENSOR_FRAME -> e.getSensorFrame().getSensorId();
            default -> null;
        };
    }
}
