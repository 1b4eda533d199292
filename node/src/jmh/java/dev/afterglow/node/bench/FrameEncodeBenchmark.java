package dev.afterglow.node.bench;

import dev.afterglow.filters.readout.ToneMap;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.metrics.LatencyRecorder;
import dev.afterglow.node.publish.FrameData;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.publish.Subscription;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Provenance;
import dev.afterglow.proto.v1.StageCount;
import io.netty.buffer.ByteBuf;
import io.netty.channel.embedded.EmbeddedChannel;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.TearDown;

/**
 * Microseconds to publish one 640x480 frame to one subscriber through {@link FramePublisher}, the
 * node's own path after readout: render the pixels in the subscriber's format (gray8: the default
 * percentile tone map over the float log image; log-f32: the floats as little-endian bytes), build
 * the {@code IntensityFrame} with its provenance and encode the envelope with its length prefix
 * (protobuf), then write it to the subscriber's channel (an {@link EmbeddedChannel}, drained and
 * released after each call, so no socket is involved).
 *
 * <p>The log image is seeded noise over a horizontal ramp (invented data; the tone map's cost does
 * not depend on the picture, only on its size).
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"}) // fixed heap: no resizing during measurement
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
public class FrameEncodeBenchmark {
    static final int WIDTH = 640;
    static final int HEIGHT = 480;

    /** Pixel format of the subscription. */
    @Param({"gray8", "log-f32"})
    public String format;

    private FramePublisher publisher;
    private EmbeddedChannel channel;
    private Counters counters;
    private float[] log;
    private byte[] gray;
    private ToneMapper toneMapper;
    private Provenance provenance;
    private long sequence;

    private LatencyRecorder writeLatency;

    /** Builds the image, the publisher and one subscription on an embedded channel. */
    @Setup(Level.Trial)
    public void setUp() {
        log = new float[WIDTH * HEIGHT];
        gray = new byte[WIDTH * HEIGHT];
        SplittableRandom random = new SplittableRandom(0x5EED_2026L);
        for (int y = 0; y < HEIGHT; y++) {
            for (int x = 0; x < WIDTH; x++) {
                log[y * WIDTH + x] = (float) (4.0 * x / WIDTH + 0.2 * (random.nextDouble() - 0.5));
            }
        }
        toneMapper = new ToneMapper(ToneMap.DEFAULT);
        publisher = new FramePublisher(NodeClock.SYSTEM, new dev.afterglow.node.stats.Counters(), Long.MAX_VALUE);
        channel = new EmbeddedChannel();
        PixelFormat f = format.equals("gray8") ? PixelFormat.PIXEL_FORMAT_GRAY8 : PixelFormat.PIXEL_FORMAT_LOG_F32;
        publisher.add(new Subscription(channel, "bench", f, 0, 0, WIDTH, HEIGHT, 1, 0));
        counters = new Counters();
        writeLatency = LatencyRecorder.forConcurrentWriters();
        provenance = Provenance.newBuilder().setEventsApplied(40_000).setEventsDropped(12)
                .addStages(StageCount.newBuilder().setStage("refractory").setEventsIn(40_100).setEventsRemoved(60))
                .addStages(StageCount.newBuilder().setStage("background-activity").setEventsIn(40_040).setEventsRemoved(40))
                .addStages(StageCount.newBuilder().setStage("high-pass").setEventsIn(40_000))
                .build();
    }

    /** Renders, encodes and writes one frame; returns the encoded size. */
    @Benchmark
    public long publish() {
        long seq = ++sequence;
        long nowUs = System.nanoTime() / 1000;
        FrameData frame = new FrameData("bench", seq, seq, seq * 10_000, (seq - 1) * 10_000, WIDTH, HEIGHT, 100,
                log, this::gray8, provenance, nowUs - 2_000, nowUs - 500, nowUs * 1000 - 100_000, 100_000);
        publisher.publish(frame, counters, writeLatency);
        long bytes = 0;
        for (ByteBuf b; (b = channel.readOutbound()) != null; ) {
            bytes += b.readableBytes();
            b.release();
        }
        return bytes;
    }

    private byte[] gray8() {
        toneMapper.apply(log, log.length, gray);
        return gray;
    }

    /** Closes the channel. */
    @TearDown(Level.Trial)
    public void tearDown() {
        channel.finishAndReleaseAll();
    }
}
