package dev.afterglow.node.pipeline;

import com.google.protobuf.UnsafeByteOperations;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.publish.Subscription;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.PixelFormat;
import io.netty.buffer.Unpooled;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelOutboundHandlerAdapter;
import io.netty.channel.ChannelPromise;
import io.netty.channel.DefaultEventLoop;
import io.netty.channel.embedded.EmbeddedChannel;
import io.netty.util.ReferenceCountUtil;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;

/**
 * Streams a generated scene through a throwaway pipeline for every distinct configured chain and
 * tone map before the node accepts sensors, so the JIT has compiled what a packet and a frame go
 * through (envelope parsing, decoding, the stages, readout, the tone map, frame encoding for a
 * subscriber) by the time a real sensor's first packets arrive; otherwise its first second is
 * processed by the interpreter and much of it is shed against the latency budget. The throwaway
 * pipeline runs on its own thread with a clock that follows the generated sensor time, so nothing
 * in it is shed, and its frames go to a subscriber that discards them. Takes about
 * {@value #BUDGET_MS} ms on the calling thread; nothing of it outlives the call.
 */
public final class PipelineWarmup {
    static final long BUDGET_MS = 1_200;
    private static final int WIDTH = 320;
    private static final int HEIGHT = 240;
    private static final long SCENE_US = 250_000;
    private static final int PACKET_US = 1_000;
    private static final int EVENTS_PER_PACKET = 2_000;

    private PipelineWarmup() {
    }

    /** Warms every distinct chain and tone map of {@code config}. */
    public static void run(NodeConfig config) {
        Map<String, SensorConfig> distinct = new LinkedHashMap<>();
        List<SensorConfig> all = new ArrayList<>(config.sensors);
        all.add(0, config.sensorDefaults);
        for (SensorConfig s : all) {
            SensorConfig w = s.forSensor("warm-up", WIDTH, HEIGHT);
            w.frameRateHz = 100;
            w.latencyBudgetMs = 10_000;
            w.readoutEveryEvents = 0;
            w.token = "";
            distinct.putIfAbsent(w.chain + "|" + w.toneMap, w);
        }
        List<byte[]> packets = scene();
        long deadline = System.nanoTime() + TimeUnit.MILLISECONDS.toNanos(BUDGET_MS);
        DefaultEventLoop loop = new DefaultEventLoop();
        EmbeddedChannel sink = new EmbeddedChannel(new Discard());
        try {
            for (SensorConfig c : distinct.values()) {
                c.validate("warm-up");
                run(c, packets, loop, sink, deadline);
            }
        } catch (RuntimeException e) {
            // A warm-up that fails costs only speed at start; the node itself reports real faults.
        } finally {
            loop.shutdownGracefully(0, 1, TimeUnit.SECONDS).awaitUninterruptibly(2, TimeUnit.SECONDS);
            sink.finishAndReleaseAll();
        }
    }

    private static void run(SensorConfig c, List<byte[]> packets, DefaultEventLoop loop, EmbeddedChannel sink, long deadline) {
        AtomicLong sensorNowUs = new AtomicLong();
        NodeClock clock = new NodeClock() { // host time = generated sensor time: nothing is late
            @Override
            public long monotonicNanos() {
                return sensorNowUs.get() * 1000;
            }

            @Override
            public long wallNanos() {
                return NodeClock.SYSTEM.wallNanos();
            }
        };
        FramePublisher publisher = new FramePublisher(clock, new Counters(), 64 << 20);
        publisher.add(new Subscription(sink, c.id, PixelFormat.PIXEL_FORMAT_GRAY8, 0, 0, WIDTH, HEIGHT, 1, 0));
        publisher.add(new Subscription(sink, c.id, PixelFormat.PIXEL_FORMAT_LOG_F32, 0, 0, WIDTH, HEIGHT, 2, 0));
        SensorPipeline p = new SensorPipeline(c, loop, publisher, clock, new Counters(), 1 << 16, 1 << 30, 1 << 16, 500_000);
        long sequence = 0;
        for (long round = 0; System.nanoTime() < deadline; round++) {
            long shift = 1_000_000 + round * SCENE_US;
            for (int i = 0; i < packets.size() && System.nanoTime() < deadline; i++) {
                long base = shift + (long) i * PACKET_US;
                sensorNowUs.set(base + PACKET_US);
                byte[] events = packets.get(i);
                byte[] wire = Envelope.newBuilder().setSchemaVersion(Envelopes.SCHEMA_VERSION).setEvents(EventPacket.newBuilder()
                        .setSensorId(c.id).setSequence(sequence++).setTimeBaseUs(base)
                        .setEventCount(events.length / EventPacketCodec.BYTES_PER_EVENT)
                        .setEvents(UnsafeByteOperations.unsafeWrap(events))).build().toByteArray();
                try {
                    Envelope e = Envelopes.parse(Unpooled.wrappedBuffer(wire));
                    p.offerPacket(e.getEvents(), clock.monotonicNanos(), Transport.TCP);
                } catch (com.google.protobuf.InvalidProtocolBufferException ex) {
                    throw new IllegalStateException(ex);
                }
                while (p.pendingPackets() > 8 && System.nanoTime() < deadline) { // keep pace; nothing queues up
                    Thread.onSpinWait();
                }
            }
        }
        p.close();
    }

    /** An edge sweeping across the image (correlated events) plus uniform noise, as packets of event records. */
    private static List<byte[]> scene() {
        List<byte[]> packets = new ArrayList<>();
        SplittableRandom random = new SplittableRandom(1);
        EventBatch step = new EventBatch(EVENTS_PER_PACKET);
        for (long t = 0; t < SCENE_US; t += PACKET_US) {
            step.reset(0); // records hold offsets from the packet's time base, set when it is sent
            int edge = (int) (t * WIDTH / SCENE_US);
            for (int k = 0; k < EVENTS_PER_PACKET; k++) {
                int x = k % 5 == 0 ? random.nextInt(WIDTH) : Math.min(WIDTH - 1, edge + random.nextInt(3));
                step.add(x, random.nextInt(HEIGHT), (long) k * PACKET_US / EVENTS_PER_PACKET, k % 2 == 0 ? 1 : -1);
            }
            packets.add(EventPacketCodec.encode(step));
        }
        return packets;
    }

    /** A subscriber that takes every frame and throws it away. */
    private static final class Discard extends ChannelOutboundHandlerAdapter {
        @Override
        public void write(ChannelHandlerContext ctx, Object msg, ChannelPromise promise) {
            ReferenceCountUtil.release(msg);
            promise.setSuccess();
        }
    }
}
