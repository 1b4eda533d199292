package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.learned.VoxelGrid;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.FloatBuffer;
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
 * The learned reconstruction's voxel grid (B = 5 bins): microseconds per normalisation of a whole
 * grid ({@link #normalise}, at 346x260 and 640x480,
 * into a direct buffer padded to a multiple of 8, as the stage does before each inference). The grid
 * normalised holds the events of one 50 ms window of the scene at its size (about a million events
 * at 640x480); it is refilled before each call, outside the measurement.
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"}) // fixed heap: no resizing during measurement
public class VoxelGridBenchmark {
    /** Time bins. */
    static final int BINS = 5;
    /** Window of one inference (20 inferences per second). */
    static final long WINDOW_US = 50_000;

    /** Sensor size for {@link #normalise}, WIDTHxHEIGHT. */
    @Param({"346x260", "640x480"})
    public String sensor;

    private VoxelGrid grid;
    private float[] filled;
    private FloatBuffer out;
    private int paddedWidth;
    private int paddedHeight;

    /** Builds the grids and the filled window. */
    @Setup(Level.Trial)
    public void setUp() {
        String[] size = sensor.split("x");
        int width = Integer.parseInt(size[0]);
        int height = Integer.parseInt(size[1]);
        grid = new VoxelGrid(BINS, width, height);
        paddedWidth = (width + 7) / 8 * 8;
        paddedHeight = (height + 7) / 8 * 8;
        out = ByteBuffer.allocateDirect(BINS * paddedWidth * paddedHeight * 4).order(ByteOrder.nativeOrder()).asFloatBuffer();
        SyntheticScene scene = SyntheticScene.generate(width, height,
                (int) (SceneEvents.EVENTS_PER_SECOND * width * height / (640.0 * 480) * WINDOW_US / 1e6),
                SceneEvents.EVENTS_PER_SECOND * width * height / (640.0 * 480), SceneEvents.NOISE_FRACTION, SceneEvents.SEED);
        EventBatch batch = new EventBatch(scene.size());
        batch.reset(scene.t(0));
        for (int i = 0; i < scene.size(); i++) {
            batch.add(scene.x(i), scene.y(i), scene.t(i), scene.p(i));
        }
        grid.add(batch, scene.t(0), scene.t(0) + WINDOW_US);
        filled = grid.cells().clone();
        long nonZero = 0;
        for (float c : filled) {
            nonZero += c != 0 ? 1 : 0;
        }
        System.out.printf("voxel grid %s: %d events in %d ms, %d of %d cells non-zero%n", sensor, scene.size(),
                WINDOW_US / 1000, nonZero, filled.length);
    }

    /** Restores the filled window before each normalisation (not measured). */
    @Setup(Level.Invocation)
    public void refill() {
        System.arraycopy(filled, 0, grid.cells(), 0, filled.length);
    }

    /** Normalises a filled grid into the padded input buffer (and empties the grid). */
    @Benchmark
    @BenchmarkMode(Mode.AverageTime)
    @OutputTimeUnit(TimeUnit.MICROSECONDS)
    public FloatBuffer normalise() {
        grid.normaliseInto(out, paddedWidth, paddedHeight);
        return out;
    }
}
