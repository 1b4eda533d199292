package dev.afterglow.node.surge;

import dev.afterglow.filters.synth.SceneKind;
import java.nio.file.Path;
import java.util.List;

/**
 * The validated settings of a load-generator run (checked by the {@code surge} command).
 *
 * @param nodeHost node's ingest host
 * @param nodePort node's ingest port (TCP or UDP, by {@code udp})
 * @param subscribeHost node's subscriber host
 * @param subscribePort node's subscriber port
 * @param httpHost node's HTTP host
 * @param httpPort node's HTTP port
 * @param moreHttp further nodes' HTTP endpoints as host:port (the other members of a Kafka group), summed with the first
 * @param udp true to send over UDP (the node must already know the sensors), false for TCP
 * @param sensors number of sensors, ids {@code surge-0 ..}
 * @param subscribers subscribers per sensor
 * @param rates the sweep, events/s per sensor
 * @param stepSeconds measured host seconds per step
 * @param warmupSeconds host seconds sent at the step's rate before each measured step
 * @param width sensor width
 * @param height sensor height
 * @param scene the synthetic scene of the event loop
 * @param packetUs sensor time per packet (span)
 * @param out folder for the CSV and the PNG
 * @param subscriberRateHz frames per second each subscriber asks for (0: every frame)
 * @param seed seed of the synthetic sensor
 * @param kafka where the sensors send and the frames come from when they go through Kafka, or null
 */
public record SurgeSettings(
        String nodeHost,
        int nodePort,
        String subscribeHost,
        int subscribePort,
        String httpHost,
        int httpPort,
        List<String> moreHttp,
        boolean udp,
        int sensors,
        int subscribers,
        RateList rates,
        double stepSeconds,
        double warmupSeconds,
        int width,
        int height,
        SceneKind scene,
        long packetUs,
        Path out,
        double subscriberRateHz,
        long seed,
        KafkaRoute kafka) {

    /**
     * Sensors produce to {@code eventTopic} on {@code bootstrap} (the node consumes it); frames are
     * read from {@code frameTopic} if set (one reader per sensor), else from subscriber connections.
     */
    public record KafkaRoute(String bootstrap, String eventTopic, String frameTopic) {
    }

    /** The transport's name for reports. */
    public String transportName() {
        return kafka != null ? "kafka" : udp ? "udp" : "tcp";
    }

    /** Id of sensor {@code i}. */
    public static String sensorId(int i) {
        return "surge-" + i;
    }
}
