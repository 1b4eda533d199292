package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.learned.VoxelGrid;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OperationsPerInvocation;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;

/**
 * Events per second binned into the learned reconstruction's voxel grid (B = 5 bins): the 640x480
 * scene of {@link SceneEvents}, each batch into a 50 ms window around it (events past its end are
 * clamped into the last bin, as between readouts). The batches are only read, so no copy is measured.
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"}) // fixed heap: no resizing during measurement
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
public class VoxelGridAddBenchmark {
    private VoxelGrid grid;
    private Replay replay;
    private SceneEvents events;

    /** Builds the grid. */
    @Setup(Level.Trial)
    public void setUp(SceneEvents events) {
        this.events = events;
        this.replay = new Replay(events);
        this.grid = new VoxelGrid(VoxelGridBenchmark.BINS, SceneEvents.WIDTH, SceneEvents.HEIGHT);
    }

    /** Bins one batch of the 640x480 scene (4096 events) into a window around it. */
    @Benchmark
    @OperationsPerInvocation(SceneEvents.BATCH_EVENTS)
    public long addEvents() {
        EventBatch b = events.batches[replay.advance()];
        long t0 = b.timeBaseUs - VoxelGridBenchmark.WINDOW_US / 2;
        grid.add(b, t0, t0 + VoxelGridBenchmark.WINDOW_US);
        return grid.eventsAdded();
    }

}
