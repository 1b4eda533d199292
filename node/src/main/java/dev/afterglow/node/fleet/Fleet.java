package dev.afterglow.node.fleet;

import dev.afterglow.node.config.KafkaConfig;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.publish.FrameSink;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.proto.v1.PixelFormat;
import java.time.Duration;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.concurrent.Executors;
import java.util.concurrent.ScheduledExecutorService;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;

/**
 * The node's part in a fleet, as configured under {@code kafka}: the edge's forwarder (in front of
 * every TCP/UDP sensor), the processing group's source, and the frame topic's producer (a frame
 * sink for every sensor). Made before the sensors (they take its sink and forwarder), started
 * once the sensor registry exists, closed source first (its last commit is clean) and frame
 * producer last (pipelines flush their last frames into it).
 */
public final class Fleet implements AutoCloseable {
    private final KafkaConfig config;
    /** This node's name in the fleet (client ids, commit metadata, frame header), resolved once. */
    private final String member;
    private final NodeClock clock;
    private final Counters nodeCounters;
    private EventForwarder forwarder;
    private KafkaProducer<byte[], byte[]> frameProducer;
    private EventTopicSource source;
    private ScheduledExecutorService timer;

    private Fleet(KafkaConfig config, NodeClock clock, Counters nodeCounters) {
        this.config = config;
        this.member = config.member();
        this.clock = clock;
        this.nodeCounters = nodeCounters;
    }

    /** Checks the broker and topics and makes the producers; a {@code ConfigException} names what is wrong. */
    public static Fleet create(KafkaConfig config, NodeClock clock, Counters nodeCounters) {
        KafkaLogging.quiet();
        Fleet f = new Fleet(config, clock, nodeCounters);
        Set<String> topics = new LinkedHashSet<>();
        if (config.forward || config.consume) {
            topics.add(config.eventTopic);
        }
        if (config.producesFrames()) {
            topics.add(config.frameTopic);
        }
        KafkaClients.checkTopics(config, topics, f.member);
        try {
            if (config.forward) {
                f.forwarder = new EventForwarder(config, f.member);
                f.timer = Executors.newSingleThreadScheduledExecutor(r -> {
                    Thread t = new Thread(r, "afterglow-kafka-hellos");
                    t.setDaemon(true);
                    return t;
                });
                f.timer.scheduleAtFixedRate(() -> f.forwarder.repeatHellos(System.nanoTime()), config.helloRepeatMs,
                        config.helloRepeatMs, TimeUnit.MILLISECONDS);
            }
            if (config.producesFrames()) {
                f.frameProducer = KafkaClients.producer(config, "frames", f.member);
                KafkaClients.awaitMetadata(f.frameProducer, config.frameTopic);
            }
        } catch (RuntimeException e) {
            f.close();
            throw e;
        }
        return f;
    }

    /** The frame sinks each sensor gets (the frame topic, if configured). */
    public SensorRegistry.ExtraSinks sinks() {
        if (frameProducer == null) {
            return (id, c) -> List.of();
        }
        PixelFormat format = config.frameFormat.equals("log-f32") ? PixelFormat.PIXEL_FORMAT_LOG_F32 : PixelFormat.PIXEL_FORMAT_GRAY8;
        return (id, c) -> List.<FrameSink>of(new FrameTopicSink(frameProducer, config.frameTopic, format,
                config.frameDownscale, config.frameRateHz, clock, id, c, member));
    }

    /** What stands in front of each pipeline for TCP and UDP messages (the edge's forwarder, if forwarding). */
    public SensorRegistry.InputWrapper inputs() {
        return forwarder == null ? p -> p : forwarder::wrap;
    }

    /** Joins the processing group, if configured. */
    public void start(SensorRegistry registry) {
        if (config.consume) {
            source = new EventTopicSource(config, member, registry, clock, nodeCounters);
            source.start();
        }
    }

    /** True if this node is a processing-group member. */
    public boolean consumes() {
        return config.consume;
    }

    /** The processing group's source, or null. */
    public EventTopicSource source() {
        return source;
    }

    /** Stops taking sensors from the event topic (a clean hand-over) and stops forwarding. */
    public void stopIntake() {
        if (source != null) {
            source.close();
        }
        if (timer != null) {
            timer.shutdownNow();
        }
        if (forwarder != null) {
            forwarder.close();
        }
    }

    @Override
    public void close() {
        stopIntake();
        if (frameProducer != null) {
            frameProducer.close(Duration.ofSeconds(5));
        }
    }
}
