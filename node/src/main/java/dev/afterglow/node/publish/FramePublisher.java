package dev.afterglow.node.publish;

import com.google.protobuf.UnsafeByteOperations;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Provenance;
import dev.afterglow.proto.v1.Region;
import dev.afterglow.metrics.LatencyRecorder;
import io.netty.buffer.ByteBuf;
import io.netty.buffer.PooledByteBufAllocator;
import io.netty.channel.ChannelPromise;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.CopyOnWriteArrayList;

/**
 * Fans frames out to subscribers. For each frame, each distinct request (format, region,
 * downscale) is rendered and encoded once, and the bytes are shared by every subscriber with that
 * request. A subscriber whose connection is not writable (its unsent bytes are above the high
 * water mark) misses the frame, counted, and gets the latest frame once it drains: latest wins, and
 * nobody else waits for it.
 *
 * <p>Threading: {@link #publish} runs on the sensor's pipeline thread; subscriptions are added and
 * removed from I/O threads (copy-on-write lists, changes are rare).
 */
public final class FramePublisher {
    private final NodeClock clock;
    private final Map<String, List<Subscription>> bySensor = new ConcurrentHashMap<>();

    public FramePublisher(NodeClock clock) {
        this.clock = clock;
    }

    /** Adds a subscription. */
    public void add(Subscription s) {
        bySensor.computeIfAbsent(s.sensorId, id -> new CopyOnWriteArrayList<>()).add(s);
    }

    /** Removes a subscription (on disconnect). */
    public void remove(Subscription s) {
        List<Subscription> list = bySensor.get(s.sensorId);
        if (list != null) {
            list.remove(s);
        }
    }

    /** Current subscriptions of a sensor. */
    public List<Subscription> subscriptions(String sensorId) {
        return bySensor.getOrDefault(sensorId, List.of());
    }

    /** True if the sensor has at least one subscription (frames are only read out then). */
    public boolean hasSubscribers(String sensorId) {
        List<Subscription> list = bySensor.get(sensorId);
        return list != null && !list.isEmpty();
    }

    /** Number of subscriptions over all sensors. */
    public int count() {
        int n = 0;
        for (List<Subscription> l : bySensor.values()) {
            n += l.size();
        }
        return n;
    }

    /**
     * Publishes one frame to the sensor's subscribers; returns the number of subscribers written to.
     * When a write reaches the socket, the time since the frame's readout started goes to
     * {@code writeLatency} (on the subscriber's I/O thread).
     */
    public int publish(FrameData frame, Counters sensorCounters, LatencyRecorder writeLatency) {
        sensorCounters.increment(NodeCounter.FRAMES_PUBLISHED);
        List<Subscription> subs = bySensor.get(frame.sensorId());
        if (subs == null || subs.isEmpty()) {
            return 0;
        }
        Map<Subscription.RenderKey, ByteBuf> encoded = new HashMap<>(4);
        long readoutStart = frame.readoutStartNanos();
        int written = 0;
        try {
            for (Subscription s : subs) {
                if (!s.wants(frame.frameIndex(), frame.sensorRateHz())) {
                    continue;
                }
                if (!s.channel.isActive()) {
                    continue;
                }
                if (!s.channel.isWritable()) {
                    s.countMissed();
                    sensorCounters.increment(NodeCounter.FRAMES_MISSED);
                    continue;
                }
                ByteBuf bytes = encoded.computeIfAbsent(s.key, k -> encode(frame, k));
                ChannelPromise sent = s.channel.newPromise();
                sent.addListener(f -> {
                    if (f.isSuccess()) {
                        writeLatency.recordNanos(clock.monotonicNanos() - readoutStart);
                    }
                });
                s.channel.writeAndFlush(bytes.retainedDuplicate(), sent);
                s.countDelivered();
                written++;
            }
        } finally {
            for (ByteBuf b : encoded.values()) {
                b.release();
            }
        }
        return written;
    }

    private ByteBuf encode(FrameData f, Subscription.RenderKey k) {
        byte[] pixels = k.format() == PixelFormat.PIXEL_FORMAT_LOG_F32
                ? RegionRenderer.logF32(f.log(), f.width(), k)
                : RegionRenderer.gray(f.gray8().get(), f.width(), f.height(), k);
        long nowUs = clock.monotonicNanos() / 1000;
        Provenance.Builder p = f.provenance().toBuilder()
                .setPublishHostTimeNs(clock.wallNanos())
                .setSensorToPublishUs(nowUs - f.frameHostUs())
                .setReadoutNs(f.readoutNanos());
        if (f.newestArrivalUs() > 0) {
            p.setArrivalToPublishUs(nowUs - f.newestArrivalUs());
        }
        IntensityFrame frame = IntensityFrame.newBuilder()
                .setSensorId(f.sensorId())
                .setSequence(f.sequence())
                .setFrameTimeUs(f.frameTimeUs())
                .setWindowStartUs(f.windowStartUs())
                .setWindowEndUs(f.frameTimeUs())
                .setFormat(k.format())
                .setWidth(k.width() / k.downscale())
                .setHeight(k.height() / k.downscale())
                .setRegion(Region.newBuilder().setX(k.x()).setY(k.y()).setWidth(k.width()).setHeight(k.height()))
                .setDownscale(k.downscale())
                .setPixels(UnsafeByteOperations.unsafeWrap(pixels))
                .setProvenance(p)
                .build();
        // Pooled: the buffer goes back to the pool once every subscriber's write has completed.
        return Envelopes.delimited(Envelope.newBuilder()
                .setSchemaVersion(Envelopes.SCHEMA_VERSION)
                .setIntensityFrame(frame)
                .build(), PooledByteBufAllocator.DEFAULT);
    }
}
