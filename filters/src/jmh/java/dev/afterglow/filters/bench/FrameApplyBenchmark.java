package dev.afterglow.filters.bench;

import dev.afterglow.filters.recon.FrameNoiseModel;
import dev.afterglow.filters.recon.KalmanFusion;
import java.nio.ByteBuffer;
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

/**
 * Microseconds per sensor frame fused by {@link KalmanFusion} at 640x480, 8 bits, with and without
 * the local-statistics frame filter ({@code frame-smoothing} 0 and 1), noise learning off. The
 * frame is a dim ramp with Gaussian read noise (values 0 .. 60), so the filter both averages and
 * keeps pixels. Each call applies the frame 50 ms after the previous one, taken against the
 * current estimate (no tracked exposure: this is the frame pass alone).
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"})
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
public class FrameApplyBenchmark {
    private static final int WIDTH = 640;
    private static final int HEIGHT = 480;

    /** Radius of the frame filter; 0: off. */
    @Param({"0", "1"})
    public int smoothing;

    private KalmanFusion fusion;
    private ByteBuffer frame;
    private long timeUs;

    /** Builds the filter and a noisy frame. */
    @Setup(Level.Trial)
    public void setUp() {
        fusion = new KalmanFusion(WIDTH, HEIGHT, 0.2, 0.02, 0.6, new FrameNoiseModel(0.5, 2, 0.98), false, smoothing,
                "kalman-fusion");
        byte[] pixels = new byte[WIDTH * HEIGHT];
        SplittableRandom random = new SplittableRandom(1);
        for (int i = 0; i < pixels.length; i++) {
            double level = 5 + 50.0 * (i % WIDTH) / WIDTH;
            pixels[i] = (byte) Math.max(0, Math.min(255, Math.round(level + 2 * random.nextGaussian())));
        }
        frame = ByteBuffer.wrap(pixels);
    }

    /** One frame fused. */
    @Benchmark
    public KalmanFusion applyFrame() {
        timeUs += 50_000;
        fusion.applyFrame(timeUs, frame, 8);
        return fusion;
    }
}
