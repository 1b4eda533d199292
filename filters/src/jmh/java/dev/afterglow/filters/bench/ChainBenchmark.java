package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.DefaultChains;
import dev.afterglow.filters.recon.FrameFusion;
import java.nio.ByteBuffer;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.recon.Reconstruction;
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
 * Events per second through a chain (the default chains for events-only sensors and for sensors
 * with frames, and the earlier fixed default), without readout and with a full 640x480 float
 * readout every {@value SceneEvents#READOUT_INTERVAL_US} us of sensor time. A fusion chain also
 * gets a sensor frame (a ramp, 10 ms exposure) every {@value #FRAME_INTERVAL_US} us of sensor time
 * in {@link #chainWithReadout()}, as a 20 Hz sensor sends them.
 *
 * <p>As in {@link StageBenchmark}, each invocation copies a pristine batch into a work batch first;
 * <b>the copy is included in the score</b> ({@link DecodeBenchmark#copyBaseline()} measures it alone).
 * {@link #decodeAndChain()} starts from the packet's bytes instead, as the node does per packet:
 * decode (geometry checks included), then the chain.
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"}) // fixed heap: no resizing during measurement
@BenchmarkMode(Mode.Throughput)
@OutputTimeUnit(TimeUnit.SECONDS)
public class ChainBenchmark {
    /** The chain measured by default before the automatic defaults. */
    public static final String CHAIN =
            "refractory(period=1ms) | background-activity(window=2ms) | high-pass(cutoff=5rad/s, contrast=0.2)";
    /** Sensor time between two sensor frames for a fusion chain (20 Hz). */
    public static final long FRAME_INTERVAL_US = 50_000;

    /** Which chain: {@code events} and {@code frames} are {@link DefaultChains}' two; {@code fixed} is {@link #CHAIN}. */
    @Param({"events", "frames", "fixed"})
    public String chainName;

    private Chain chain;
    private Reconstruction reconstruction;
    private FrameFusion fusion;
    private ByteBuffer sensorFrame;
    private float[] frame;
    private EventBatch work;
    private Replay replay;
    private SceneEvents events;
    private long readouts;
    private EventPacketCodec codec;
    private DecodeResult decoded;

    /** Builds the chain and the readout buffer. */
    @Setup(Level.Trial)
    public void setUp(SceneEvents events) {
        this.events = events;
        String text = switch (chainName) {
            case "events" -> DefaultChains.EVENTS_ONLY;
            case "frames" -> DefaultChains.WITH_FRAMES;
            default -> CHAIN;
        };
        chain = Chain.build(text, SceneEvents.WIDTH, SceneEvents.HEIGHT);
        reconstruction = chain.reconstruction();
        fusion = reconstruction instanceof FrameFusion f ? f : null;
        sensorFrame = SyntheticScene.rampFrame(SceneEvents.WIDTH, SceneEvents.HEIGHT);
        frame = new float[SceneEvents.WIDTH * SceneEvents.HEIGHT];
        work = new EventBatch(SceneEvents.BATCH_EVENTS);
        replay = new Replay(events);
        codec = new EventPacketCodec(SceneEvents.WIDTH, SceneEvents.HEIGHT);
        decoded = new DecodeResult();
    }

    /** One batch through the chain. */
    @Benchmark
    @OperationsPerInvocation(SceneEvents.BATCH_EVENTS)
    public int chain() {
        replay.advance();
        replay.copyCurrent(work); // included in the measurement
        chain.process(work);
        return work.size;
    }

    /** One packet per invocation: its bytes decoded into the work batch, then the chain. */
    @Benchmark
    @OperationsPerInvocation(SceneEvents.BATCH_EVENTS)
    public int decodeAndChain() {
        int b = replay.advance();
        codec.decode(events.packets[b], SceneEvents.BATCH_EVENTS, events.batches[b].timeBaseUs + replay.shiftUs(), work, decoded);
        chain.process(work);
        return work.size;
    }

    /**
     * One batch through the chain, split at every readout tick that falls inside it: the events up to
     * the tick go through the chain, then the whole frame is read out at the tick's time, then the
     * rest follows. So readout and events interleave by sensor time as in the node.
     */
    @Benchmark
    @OperationsPerInvocation(SceneEvents.BATCH_EVENTS)
    public long chainWithReadout() {
        int b = replay.advance();
        int[] offsets = events.tickOffsets[b];
        long[] times = events.tickTimesUs[b];
        long shift = replay.shiftUs();
        int from = 0;
        for (int k = 0; k < offsets.length; k++) {
            int to = offsets[k];
            if (to > from) {
                replay.copyCurrent(from, to, work); // included in the measurement
                chain.process(work);
                from = to;
            }
            long t = times[k] + shift;
            if (fusion != null && t % FRAME_INTERVAL_US == 0) {
                fusion.applyFrame(t - 10_000, t, sensorFrame, 8);
            }
            reconstruction.readLog(t, frame);
            readouts++;
        }
        if (from < SceneEvents.BATCH_EVENTS) {
            replay.copyCurrent(from, SceneEvents.BATCH_EVENTS, work);
            chain.process(work);
        }
        return readouts + work.size;
    }
}
