package dev.afterglow.node.learned;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.synth.Scene;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SensorConfig;
import dev.afterglow.filters.synth.SyntheticSensor;
import dev.afterglow.filters.synth.TrainingMixScene;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.Callable;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.atomic.AtomicInteger;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * {@code afterglow training-set}: sequences of the randomised {@link TrainingMixScene} through the
 * synthetic sensor with randomised sensor conditions, one numpy {@code .npz} per sequence, for
 * training learned reconstruction. Each file holds the events ({@code x}, {@code y} as uint16,
 * {@code t} in microseconds as int64, {@code p} as int8 ±1), the true log irradiance
 * {@code frames} (float32, K x H x W) at {@code frame_times} (int64 us, every {@code --period}),
 * {@code sensor} (float64: contrast, mismatch, refractory us, background Hz per pixel, hot
 * pixels, hot-pixel Hz, seed) and, for the training mix, {@code motion} (int8: 0 the camera pans, 1
 * it spins, 2 it rolls and zooms; see {@link TrainingMixScene#motionKind}).
 */
@Command(name = "training-set", mixinStandardHelpOptions = true, sortOptions = false,
        description = "Writes randomised synthetic training sequences (events + true log irradiance) as .npz files.")
public final class TrainingSetCommand implements Callable<Integer> {
    /** First seed of the training family: far from the benchmark seeds, and a different scene family. */
    static final long DEFAULT_FIRST_SEED = 500_000;

    @Option(names = "--out", required = true, description = "Folder for the .npz files (created).")
    Path out;

    @Option(names = "--sequences", description = "Number of sequences, 1 .. 100000. Default: ${DEFAULT-VALUE}")
    int sequences = 100;

    @Option(names = "--first-seed", description = "Seed of the first sequence; the others follow. Default: ${DEFAULT-VALUE}")
    long firstSeed = DEFAULT_FIRST_SEED;

    @Option(names = "--width", description = "Sensor width, 32 .. 1024. Default: ${DEFAULT-VALUE}")
    int width = 128;

    @Option(names = "--height", description = "Sensor height, 24 .. 1024. Default: ${DEFAULT-VALUE}")
    int height = 128;

    @Option(names = "--seconds", description = "Sensor time per sequence, 0.1 .. 60 s. Default: ${DEFAULT-VALUE}")
    double seconds = 2;

    @Option(names = "--period-ms", description = "Interval of the true frames, 1 .. 1000 ms. Default: ${DEFAULT-VALUE}")
    int periodMs = 50;

    @Option(names = "--scene", paramLabel = "NAME",
            description = "A built-in benchmark scene (e.g. stockroom-pan_dark) under its own sensor conditions "
                    + "instead of the randomised training mix, for checking a model on tuning seeds.")
    String scene;

    @Option(names = "--threads", description = "Sequences made in parallel, 1 .. 64. Default: ${DEFAULT-VALUE}")
    int threads = 2;

    @Override
    public Integer call() throws Exception {
        if (sequences < 1 || sequences > 100_000 || width < 32 || width > 1024 || height < 24 || height > 1024
                || !(seconds >= 0.1 && seconds <= 60) || periodMs < 1 || periodMs > 1000 || threads < 1 || threads > 64) {
            System.err.println("afterglow training-set: an option is outside its range (see --help)");
            return 2;
        }
        Files.createDirectories(out);
        ExecutorService pool = Executors.newFixedThreadPool(threads);
        AtomicInteger done = new AtomicInteger();
        long started = System.nanoTime();
        try {
            List<Future<Long>> jobs = new ArrayList<>();
            for (int i = 0; i < sequences; i++) {
                long seed = firstSeed + i;
                jobs.add(pool.submit(() -> {
                    long events = writeSequence(seed);
                    int d = done.incrementAndGet();
                    if (d % 10 == 0 || d == sequences) {
                        System.out.printf("%d/%d sequences, %.0f s%n", d, sequences, (System.nanoTime() - started) / 1e9);
                    }
                    return events;
                }));
            }
            long total = 0;
            for (Future<Long> f : jobs) {
                total += f.get();
            }
            System.out.printf("%d sequences, %d events, in %s%n", sequences, total, out);
        } finally {
            pool.shutdownNow();
        }
        return 0;
    }

    /** The sensor conditions of sequence {@code seed}: ranges a deployed sensor of this class may show. */
    static SensorConfig sensorFor(long seed, int width, int height) {
        SplittableRandom r = new SplittableRandom(seed * 0x9E3779B97F4A7C15L + 17);
        return SensorConfig.builder(width, height)
                .contrast(logUniform(r, 0.12, 0.45))
                .mismatch(r.nextDouble(0, 0.08))
                .refractoryUs((int) logUniform(r, 10, 1000))
                .backgroundRateHz(logUniform(r, 0.1, 5))
                .hotPixels(r.nextInt(width * height / 2000 + 1), logUniform(r, 20, 500))
                .frames(0, 1)
                .seed(seed)
                .build();
    }

    private long writeSequence(long seed) throws IOException {
        SensorConfig config;
        Scene source;
        int motion = -1;
        if (scene == null) {
            config = sensorFor(seed, width, height);
            TrainingMixScene mix = new TrainingMixScene(width, height, seed);
            motion = mix.motionKind();
            source = mix;
        } else {
            SceneKind kind = SceneKind.byLabel(scene);
            config = kind.sensor(width, height).frames(0, 1).seed(seed).build();
            source = kind.create(width, height, seed);
        }
        SyntheticSensor sensor = new SyntheticSensor(source, config);
        long endUs = Math.round(seconds * 1e6);
        long periodUs = periodMs * 1000L;
        int frames = (int) (endUs / periodUs);
        int n = width * height;
        float[] truth = new float[frames * n];
        long[] times = new long[frames];
        EventList events = new EventList();
        EventBatch batch = new EventBatch(1 << 18);
        for (int k = 1; k <= frames; k++) {
            long to = k * periodUs;
            while (sensor.timeUs() < to) {
                batch.reset(sensor.timeUs());
                sensor.step(to, batch);
                events.append(batch);
            }
            times[k - 1] = to;
            float[] frame = new float[n];
            sensor.groundTruthLog(to, frame);
            System.arraycopy(frame, 0, truth, (k - 1) * n, n);
        }
        Path file = out.resolve(String.format("%s-%07d.npz", scene == null ? "mix" : scene, seed));
        Path tmp = out.resolve(file.getFileName() + ".part");
        try (NpzWriter npz = new NpzWriter(tmp)) {
            npz.uint16("x", events.x, events.size, events.size);
            npz.uint16("y", events.y, events.size, events.size);
            npz.int64("t", events.t, events.size, events.size);
            npz.int8("p", events.p, events.size, events.size);
            npz.int64("frame_times", times, frames, frames);
            npz.float32("frames", truth, truth.length, frames, height, width);
            npz.float64("sensor", new double[] {config.contrast(), config.mismatch(), config.refractoryUs(),
                config.backgroundRateHz(), config.hotPixels(), config.hotPixelRateHz(), seed}, 7, 7);
            if (motion >= 0) {
                npz.int8("motion", new byte[] {(byte) motion}, 1, 1);
            }
        }
        Files.move(tmp, file, java.nio.file.StandardCopyOption.REPLACE_EXISTING);
        return events.size;
    }

    private static double logUniform(SplittableRandom r, double lo, double hi) {
        return Math.exp(r.nextDouble(Math.log(lo), Math.log(hi)));
    }

    /** A growing list of events in primitive arrays. */
    private static final class EventList {
        int[] x = new int[1 << 16];
        int[] y = new int[1 << 16];
        long[] t = new long[1 << 16];
        byte[] p = new byte[1 << 16];
        int size;

        void append(EventBatch b) {
            if (size + b.size > x.length) {
                int cap = Math.max(x.length * 2, size + b.size);
                x = java.util.Arrays.copyOf(x, cap);
                y = java.util.Arrays.copyOf(y, cap);
                t = java.util.Arrays.copyOf(t, cap);
                p = java.util.Arrays.copyOf(p, cap);
            }
            for (int i = 0; i < b.size; i++) {
                x[size] = b.x[i];
                y[size] = b.y[i];
                t[size] = b.timeBaseUs + b.t[i];
                p[size] = b.p[i];
                size++;
            }
        }
    }
}
