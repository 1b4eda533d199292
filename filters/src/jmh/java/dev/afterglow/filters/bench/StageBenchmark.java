package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import java.util.concurrent.TimeUnit;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OperationsPerInvocation;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;

/**
 * Events per second through one stage alone, fed the whole scene (noise included), with the
 * parameters of {@link Stages#description(String)}.
 *
 * <p>Filtering stages compact the batch in place, so each invocation first copies the next pristine
 * batch into a work batch ({@link dev.afterglow.filters.EventBatch#copyFrom}). <b>The copy is
 * included in the score</b>; {@link DecodeBenchmark#copyBaseline()} measures it alone.
 *
 * <p>The hot-pixel filter learns over its first 2 s of sensor time (within warm-up at these rates);
 * the scene has no hot pixels, so what is measured afterwards is the mask lookup with nothing masked.
 * The complementary filter holds one ramp frame and gets no further frames.
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"}) // fixed heap: no resizing during measurement
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
public class StageBenchmark {
    /** The stage to measure. */
    @Param({"refractory", "hot-pixel", "background-activity", "correlation", "patch-support", "direct-integration",
            "high-pass", "complementary", "kalman-fusion"})
    public String stage;

    private EventStage built;
    private EventBatch work;
    private Replay replay;

    /** Builds the stage. */
    @Setup(Level.Trial)
    public void setUp(SceneEvents events) {
        built = Stages.build(stage, SceneEvents.WIDTH, SceneEvents.HEIGHT, SceneEvents.START_US);
        work = new EventBatch(SceneEvents.BATCH_EVENTS);
        replay = new Replay(events);
    }

    /** Copies the next batch into the work batch and runs the stage over it. */
    @Benchmark
    @OperationsPerInvocation(SceneEvents.BATCH_EVENTS)
    public int process() {
        replay.advance();
        replay.copyCurrent(work); // included in the measurement, see the class comment
        built.process(work);
        return work.size;
    }
}
