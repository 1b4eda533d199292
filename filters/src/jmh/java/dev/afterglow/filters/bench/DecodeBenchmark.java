package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
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
 * Events per second into the core: decoding packets into a batch, and, as the baseline every stage
 * benchmark includes, copying a pristine decoded batch into a work batch.
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"}) // fixed heap: no resizing during measurement
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
public class DecodeBenchmark {
    private EventPacketCodec codec;
    private DecodeResult result;
    private EventBatch work;
    private Replay replay;
    private SceneEvents events;

    /** Builds the decoder and the work batch. */
    @Setup(Level.Trial)
    public void setUp(SceneEvents events) {
        this.events = events;
        codec = new EventPacketCodec(SceneEvents.WIDTH, SceneEvents.HEIGHT);
        result = new DecodeResult();
        work = new EventBatch(SceneEvents.BATCH_EVENTS);
        replay = new Replay(events);
    }

    /** Decodes one packet of {@value SceneEvents#BATCH_EVENTS} events (geometry checks included). */
    @Benchmark
    @OperationsPerInvocation(SceneEvents.BATCH_EVENTS)
    public int decode() {
        int b = replay.advance();
        long timeBaseUs = events.batches[b].timeBaseUs + replay.shiftUs();
        codec.decode(events.packets[b], SceneEvents.BATCH_EVENTS, timeBaseUs, work, result);
        return result.decoded;
    }

    /** The copy of a pristine batch into the work batch alone: the part of every stage benchmark that is not the stage. */
    @Benchmark
    @OperationsPerInvocation(SceneEvents.BATCH_EVENTS)
    public int copyBaseline() {
        replay.advance();
        replay.copyCurrent(work);
        return work.size;
    }
}
