package dev.afterglow.node.fleet;

import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.publish.FrameData;
import dev.afterglow.node.publish.FrameEnvelopes;
import dev.afterglow.node.publish.FrameSink;
import dev.afterglow.node.publish.Subscription;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.PixelFormat;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;

/**
 * One sensor's frames to the frame topic: frames at the configured rate, whole, in the configured
 * pixel format and downscale, as the same envelope a subscriber with those settings receives (key:
 * sensor id). Never blocks the
 * pipeline thread: a full producer buffer or a refused record drops the frame, counted.
 */
final class FrameTopicSink implements FrameSink {
    private final String topic;
    private final PixelFormat format;
    private final NodeClock clock;
    private final byte[] key;
    private final CountedSend sends;
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
        this.topic = topic;
        this.format = format;
        this.clock = clock;
        this.key = EventRecords.key(sensorId);
        this.sends = new CountedSend(producer, counters, NodeCounter.KAFKA_FRAMES_PRODUCED, NodeCounter.KAFKA_FRAMES_DROPPED,
                "a frame of sensor " + sensorId);
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
        ProducerRecord<byte[], byte[]> r = new ProducerRecord<>(topic, key, value);
        r.headers().add(EventRecords.MEMBER_HEADER, member);
        sends.send(r);
    }
}
