package dev.afterglow.node.publish;

import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.metrics.LatencyRecorder;
import io.netty.buffer.ByteBuf;
import io.netty.buffer.PooledByteBufAllocator;
import io.netty.channel.ChannelPromise;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.concurrent.atomic.AtomicLong;

/**
 * Fans frames out to subscribers. For each frame, each distinct request (format, region,
 * downscale) is rendered and encoded once, and the bytes are shared by every subscriber with that
 * request. A subscriber whose connection is not writable (its unsent bytes are above the high
 * water mark) misses the frame, counted, and gets the latest frame once it drains: latest wins, and
 * nobody else waits for it. Encoded frames queued to subscribers are held to a node-wide budget
 * ({@code limits.frame-buffer-bytes}, each shared frame counted once); beyond it, the subscribers
 * that do not read are disconnected (counted) and the others carry on. An error while serving one
 * subscriber drops that subscriber only.
 *
 * <p>Threading: {@link #publish} runs on the sensor's pipeline thread; subscriptions are added and
 * removed from I/O threads (copy-on-write lists, changes are rare).
 */
public final class FramePublisher {
    private final NodeClock clock;
    private final Counters nodeCounters;
    private final long frameBufferBytes;
    private final AtomicLong queuedBytes = new AtomicLong();
    private final Map<String, List<Subscription>> bySensor = new ConcurrentHashMap<>();

    /**
     * @param frameBufferBytes budget of encoded frame bytes queued to all subscribers together
     */
    public FramePublisher(NodeClock clock, Counters nodeCounters, long frameBufferBytes) {
        this.clock = clock;
        this.nodeCounters = nodeCounters;
        this.frameBufferBytes = frameBufferBytes;
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

    /**
     * The sink of one sensor's subscribers: each frame is published to them (counted in
     * {@code sensorCounters}, socket writes timed into {@code writeLatency}), then its age from
     * sensor time to publishing goes to {@code publishAge}.
     */
    public FrameSink sinkFor(String sensorId, Counters sensorCounters, LatencyRecorder writeLatency,
            LatencyRecorder publishAge, java.util.function.LongSupplier monotonicNanos) {
        return new FrameSink() {
            @Override
            public boolean wantsFrames() {
                return hasSubscribers(sensorId);
            }

            @Override
            public void accept(FrameData frame) {
                publish(frame, sensorCounters, writeLatency);
                publishAge.recordNanos(monotonicNanos.getAsLong() - frame.frameHostUs() * 1000);
            }
        };
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
     * {@code writeLatency} (on the subscriber's I/O thread). An error while serving one subscriber
     * drops that subscriber only (counted, logged once).
     */
    public int publish(FrameData frame, Counters sensorCounters, LatencyRecorder writeLatency) {
        sensorCounters.increment(NodeCounter.FRAMES_PUBLISHED);
        List<Subscription> subs = bySensor.get(frame.sensorId());
        if (subs == null || subs.isEmpty()) {
            return 0;
        }
        Map<Subscription.RenderKey, SharedFrame> encoded = new HashMap<>(4);
        long readoutStart = frame.readoutStartNanos();
        int written = 0;
        boolean overBudget = false;
        try {
            for (Subscription s : subs) {
                try {
                    if (!s.wants(frame.frameIndex(), frame.sensorRateHz()) || !s.channel.isActive()) {
                        continue;
                    }
                    if (!s.channel.isWritable()) {
                        miss(s, sensorCounters);
                        continue;
                    }
                    SharedFrame bytes = encoded.get(s.key);
                    if (bytes == null) {
                        bytes = new SharedFrame(encode(frame, s.key));
                        encoded.put(s.key, bytes);
                    }
                    if (queuedBytes.get() + bytes.size > frameBufferBytes && !bytes.queued()) {
                        overBudget = true;
                        miss(s, sensorCounters);
                        continue;
                    }
                    write(s, bytes, readoutStart, writeLatency);
                    s.countDelivered();
                    written++;
                } catch (RuntimeException | OutOfMemoryError e) {
                    drop(s, e);
                }
            }
        } finally {
            for (SharedFrame b : encoded.values()) {
                b.buf.release();
            }
        }
        if (overBudget) {
            dropUnreadingSubscribers();
        }
        return written;
    }

    private static void miss(Subscription s, Counters sensorCounters) {
        s.countMissed();
        sensorCounters.increment(NodeCounter.FRAMES_MISSED);
    }

    private void write(Subscription s, SharedFrame bytes, long readoutStart, LatencyRecorder writeLatency) {
        bytes.retainForWrite();
        ChannelPromise sent = s.channel.newPromise();
        sent.addListener(f -> {
            bytes.writeDone();
            if (f.isSuccess()) {
                writeLatency.recordNanos(clock.monotonicNanos() - readoutStart);
            }
        });
        s.channel.writeAndFlush(bytes.buf.retainedDuplicate(), sent);
    }

    /** An error while serving {@code s}: it is dropped, nobody else is affected. */
    private void drop(Subscription s, Throwable e) {
        nodeCounters.increment(NodeCounter.SUBSCRIBER_FAILURES);
        OnceLog.warn("publish:" + e.getClass().getName(), "subscriber " + s.channel.remoteAddress() + " of sensor "
                + s.sensorId + " dropped after an unexpected error: " + e, e);
        remove(s);
        s.channel.close();
    }

    /**
     * Frames queued to subscribers exceed the budget: the subscribers that are not reading (their
     * connection is unwritable) hold them, so they are disconnected, and those that read carry on.
     */
    private void dropUnreadingSubscribers() {
        for (List<Subscription> list : bySensor.values()) {
            for (Subscription s : list) {
                if (!s.channel.isWritable()) {
                    nodeCounters.increment(NodeCounter.SUBSCRIBERS_DROPPED);
                    OnceLog.warn("frame-budget", "frames queued to subscribers exceed limits.frame-buffer-bytes="
                            + frameBufferBytes + "; subscribers that do not read are disconnected", null);
                    remove(s);
                    s.channel.close();
                }
            }
        }
    }

    /** Bytes of encoded frames currently queued to subscribers, each frame counted once however many share it. */
    public long queuedBytes() {
        return queuedBytes.get();
    }

    /**
     * One encoded frame shared by every subscriber with the same request: its bytes count toward
     * the budget once, from its first write until its last write has completed.
     */
    private final class SharedFrame {
        final ByteBuf buf;
        final int size;
        private final AtomicInteger writes = new AtomicInteger();

        SharedFrame(ByteBuf buf) {
            this.buf = buf;
            this.size = buf.readableBytes();
        }

        boolean queued() {
            return writes.get() > 0;
        }

        void retainForWrite() {
            if (writes.getAndIncrement() == 0) {
                queuedBytes.addAndGet(size);
            }
        }

        void writeDone() {
            if (writes.decrementAndGet() == 0) {
                queuedBytes.addAndGet(-size);
            }
        }
    }

    private ByteBuf encode(FrameData f, Subscription.RenderKey k) {
        Envelope envelope = FrameEnvelopes.build(f, k, clock.wallNanos(), clock.monotonicNanos() / 1000);
        // Pooled and direct: the socket writes these very bytes for every subscriber (a heap buffer
        // would be copied into a direct one per connection), and the buffer goes back to the pool
        // once every subscriber's write has completed.
        return Envelopes.delimitedDirect(envelope, PooledByteBufAllocator.DEFAULT);
    }
}
