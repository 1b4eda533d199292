package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.learned.LearnedReconstruction;
import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
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
 * Milliseconds per inference of the learned reconstruction: each call bins one window of events
 * (a 50 ms window of a synthetic scene at the sensor's size, about 1 M events/s at 640x480 scaled by
 * area) and reads out at the window's end, which runs the model once: voxel-grid normalisation,
 * ONNX Runtime, cropping. The inverse is the sustainable inference rate on the threads given.
 *
 * <p>{@code model}: {@code tiny-contract} (the test model, {@code filters/src/test/python}),
 * {@code builtin} (the shipped model, once it is in the jar) or a path. The fork's resident memory
 * before and after building the stage is printed (from {@code /proc/self/status}) as a rough
 * figure of what a model and its buffers take at that size.
 */
@State(Scope.Thread)
@Fork(value = 1, jvmArgsAppend = {"-Xms1g", "-Xmx1g"})
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MILLISECONDS)
public class LearnedReconBenchmark {
    static final long WINDOW_US = 50_000;

    /** Sensor size, WIDTHxHEIGHT. */
    @Param({"346x260", "640x480"})
    public String sensor;

    /** Model: tiny-contract, builtin, or a file path. */
    @Param({"tiny-contract"})
    public String model;

    /** ONNX Runtime intra-op threads. */
    @Param({"2"})
    public int threads;

    private LearnedReconstruction stage;
    private EventBatch window;
    private float[] out;
    private long nextReadoutUs;
    private long shiftUs;

    /** Builds the stage and one window of events. */
    @Setup(Level.Trial)
    public void setUp() throws IOException {
        String[] size = sensor.split("x");
        int width = Integer.parseInt(size[0]);
        int height = Integer.parseInt(size[1]);
        String file = model;
        if (model.equals("tiny-contract")) {
            Path tmp = Files.createTempFile("tiny-contract", ".onnx");
            tmp.toFile().deleteOnExit();
            try (InputStream in = LearnedReconBenchmark.class.getResourceAsStream("/dev/afterglow/filters/learned/tiny-contract.onnx")) {
                Files.copy(in, tmp, StandardCopyOption.REPLACE_EXISTING);
            }
            file = tmp.toString();
        }
        long rssBefore = rssKiB();
        stage = LearnedReconstruction.open(file, WINDOW_US, threads, width, height);
        long rssAfter = rssKiB();
        double rate = SceneEvents.EVENTS_PER_SECOND / 20 * width * height / (640.0 * 480);
        SyntheticScene scene = SyntheticScene.generate(width, height, (int) (rate * WINDOW_US / 1e6), rate,
                SceneEvents.NOISE_FRACTION, SceneEvents.SEED);
        window = new EventBatch(scene.size());
        window.reset(0);
        for (int i = 0; i < scene.size() && scene.t(i) < WINDOW_US; i++) {
            window.add(scene.x(i), scene.y(i), scene.t(i), scene.p(i));
        }
        out = new float[width * height];
        nextReadoutUs = WINDOW_US;
        System.out.printf("learned-recon %s %s, %d threads: model %s, %d events per %d ms window; RSS %d MiB -> %d MiB when built%n",
                sensor, model, threads, stage.modelIdentity(), window.size, WINDOW_US / 1000, rssBefore >> 10, rssAfter >> 10);
    }

    /** One window: bin its events, then read out at its end (one inference). */
    @Benchmark
    public float[] inferWindow() {
        window.timeBaseUs = shiftUs;
        stage.process(window);
        stage.readLog(nextReadoutUs, out);
        shiftUs += WINDOW_US;
        nextReadoutUs += WINDOW_US;
        return out;
    }

    /** Checks that every call ran an inference, then releases the session. */
    @TearDown(Level.Trial)
    public void tearDown() {
        System.out.printf("learned-recon: %d inferences, resident memory now %d MiB%n", stage.inferences(), rssKiB() >> 10);
        stage.close();
    }

    private static long rssKiB() {
        try {
            for (String line : Files.readAllLines(Path.of("/proc/self/status"))) {
                if (line.startsWith("VmRSS:")) {
                    return Long.parseLong(line.replaceAll("[^0-9]", ""));
                }
            }
        } catch (IOException | RuntimeException e) {
            // not Linux: no figure
        }
        return -1;
    }
}
