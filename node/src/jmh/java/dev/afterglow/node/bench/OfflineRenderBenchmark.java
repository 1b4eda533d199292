package dev.afterglow.node.bench;

import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.demo.SyntheticFeed;
import dev.afterglow.node.recording.OfflineRenderer;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingReader;
import dev.afterglow.recording.RecordingWriter;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Comparator;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
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
 * One offline render of a 640x480 recording (2 s of the parcel-line scene from the synthetic sensor,
 * about 9 M events in 1 ms packets, made once per trial on disk) at 100 frames/s, on one thread: the
 * segment reader, packet decoding, the chain and one readout per frame, with no outputs. Events per
 * second = the recording's events / the time per operation (printed at the end of the trial).
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms2g", "-Xmx2g"})
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MILLISECONDS)
public class OfflineRenderBenchmark {
    /** The chain rendered: a cheap one (the reader and the renderer dominate) and the events-only default. */
    @Param({"high-pass", "refractory(period=100us) | patch-support(window=16ms) | high-pass(cutoff=3rad/s)"})
    public String chain;

    private Path dir;
    private long events;
    private long renders;
    private long nanos;

    /** Writes the recording. */
    @Setup(Level.Trial)
    public void record() throws IOException, InterruptedException {
        dir = Files.createTempDirectory("afterglow-render-bench");
        SensorHello hello = SensorClient.hello("bench", 640, 480, false, "");
        try (RecordingWriter w = RecordingWriter.create(dir, "bench", hello, "bench", 0, RecordingWriter.Settings.keepAll())) {
            w.write(0, Envelope.newBuilder().setSchemaVersion(1).setHello(hello).build());
            events = new SyntheticFeed(SceneKind.PARCEL_LINE, 640, 480, null, 7).run(SyntheticFeed.recording(w, "bench"), "bench",
                    2.0, 1000, 0, false);
        }
    }

    /** Renders the whole recording. */
    @Benchmark
    public long render() throws IOException {
        long t0 = System.nanoTime();
        try (Chain c = Chain.build(chain, 640, 480); RecordingReader reader = RecordingReader.open(dir)) {
            long frames = new OfflineRenderer(c, 640, 480, 100, null).run(reader, (index, timeUs, log, gray, facts) -> { }, t -> { })
                    .frames();
            nanos += System.nanoTime() - t0;
            renders++;
            return frames;
        }
    }

    /** Prints the event rate and deletes the recording. */
    @TearDown(Level.Trial)
    public void cleanUp() throws IOException {
        System.out.printf("%n%s: %d events per render, %.1f M events/s over all %d renders, warm-up included%n", chain, events,
                events * renders / (nanos * 1e-9) / 1e6, renders);
        try (Stream<Path> files = Files.walk(dir)) {
            files.sorted(Comparator.reverseOrder()).forEach(p -> p.toFile().delete());
        }
    }
}
