package dev.afterglow.node.fleet;

import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.publish.FrameData;
import dev.afterglow.node.publish.FrameEnvelopes;
import dev.afterglow.node.publish.FrameSink;
import dev.afterglow.node.publish.Subscription;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.proto.v1.PixelFormat;
import org.apache.kafka.clients.producer.Callback;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;

/**
 * One sensor's frames to the frame topic: frames at the configured rate, whole, in the configured
 * pixel format and downscale, as the same envelope a subscriber with those settings receives (key:
 * sensor id). Never blocks the
 * pipeline thread: a full producer buffer or a refused record drops the frame, counted.
 */
final class FrameTopicSink implements FrameSink {
    private final KafkaProducer<byte[], byte[]> producer;
    private final String topic;
    private final PixelFormat format;
    private final NodeClock clock;
    private final Counters counters;
    private final byte[] key;
    private final Callback onSent;
    private final byte[] member;
    private final int downscale;
    private final double rateHz;

    /**
     * @param rateHz frames per second written (every k-th frame of the sensor's grid); 0: every frame
     * @param downscale box-downscale factor of the records
     */
    FrameTopicSink(KafkaProducer<byte[], byte[]> producer, String topic, PixelFormat format, int downscale, double rateHz,
            NodeClock clock, String sensorId, Counters counters, String member) {
        this.downscale = downscale;
        this.rateHz = rateHz;
        this.member = member.getBytes(java.nio.charset.StandardCharsets.UTF_8);
        this.producer = producer;
        this.topic = topic;
        this.format = format;
        this.clock = clock;
        this.counters = counters;
        this.key = EventRecords.key(sensorId);
        this.onSent = (metadata, e) -> {
            if (e == null) {
                counters.increment(NodeCounter.KAFKA_FRAMES_PRODUCED);
            } else {
                dropped(e);
            }
        };
    }

    @Override
    public boolean wantsFrames() {
        return true;
    }

    @Override
    public boolean wantsFrame(long frameIndex, double sensorRateHz) {
        return Subscription.onRate(frameIndex, sensorRateHz, rateHz);
    }

    @Override
    public void accept(FrameData frame) {
        if (!Subscription.onRate(frame.frameIndex(), frame.sensorRateHz(), rateHz)) {
            return;
        }
        byte[] value = FrameEnvelopes.whole(frame, format, downscale, clock.wallNanos(), clock.monotonicNanos() / 1000)
                .toByteArray();
        try {
            ProducerRecord<byte[], byte[]> r = new ProducerRecord<>(topic, key, value);
            r.headers().add(EventRecords.MEMBER_HEADER, member);
            producer.send(r, onSent);
        } catch (RuntimeException e) {
            dropped(e);
        }
    }

    private void dropped(Exception e) {
        counters.increment(NodeCounter.KAFKA_FRAMES_DROPPED);
        OnceLog.warn("kafka-frames:" + e.getClass().getName(), "a frame was not written to " + topic + ": " + e, null);
    }
}
