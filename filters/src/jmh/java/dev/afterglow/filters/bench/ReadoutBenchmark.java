package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.recon.Reconstruction;
import dev.afterglow.filters.readout.FrameReader;
import dev.afterglow.filters.readout.ToneMap;
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
 * Microseconds per readout of a whole frame: float log intensity ({@link FrameReader#readLog}) and
 * 8-bit grey with the default percentile tone map ({@link FrameReader#readGray8}, 1st to 99th
 * percentile, log curve).
 *
 * <p>The reconstruction is first fed {@value #EVENTS} events of a synthetic scene of the same size (and,
 * for the complementary filter, a ramp frame), so its state and the tone map's histogram look like
 * a real image. Every call reads out at the same time, just after the last event.
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"}) // fixed heap: no resizing during measurement
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
public class ReadoutBenchmark {
    /** Events fed before measuring. */
    static final int EVENTS = 1_000_000;

    /** Sensor size, WIDTHxHEIGHT. */
    @Param({"640x480", "1280x720"})
    public String sensor;

    /** Reconstruction read out. */
    @Param({"high-pass", "complementary", "kalman-fusion"})
    public String reconstruction;

    private FrameReader reader;
    private long readUs;

    /** Builds the reconstruction and feeds it a scene. */
    @Setup(Level.Trial)
    public void setUp() {
        String[] size = sensor.split("x");
        int width = Integer.parseInt(size[0]);
        int height = Integer.parseInt(size[1]);
        long startUs = SceneEvents.START_US;
        Reconstruction recon = (Reconstruction) Stages.build(reconstruction, width, height, startUs);
        SyntheticScene scene = SyntheticScene.generate(width, height, EVENTS, SceneEvents.EVENTS_PER_SECOND,
                SceneEvents.NOISE_FRACTION, SceneEvents.SEED);
        EventBatch batch = new EventBatch(SceneEvents.BATCH_EVENTS);
        for (int first = 0; first < scene.size(); first += SceneEvents.BATCH_EVENTS) {
            int end = Math.min(scene.size(), first + SceneEvents.BATCH_EVENTS);
            batch.reset(startUs + scene.t(first));
            for (int i = first; i < end; i++) {
                batch.add(scene.x(i), scene.y(i), startUs + scene.t(i), scene.p(i));
            }
            recon.process(batch);
        }
        readUs = startUs + scene.t(scene.size() - 1);
        reader = new FrameReader(recon, ToneMap.DEFAULT);
    }

    /** Whole frame as float log intensity. */
    @Benchmark
    public float[] readLog() {
        return reader.readLog(readUs);
    }

    /** Whole frame as 8-bit grey through the percentile tone map. */
    @Benchmark
    public byte[] readGray8() {
        return reader.readGray8(readUs);
    }
}
