package dev.afterglow.node.demo;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.readout.ToneMap;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.filters.recon.ComplementaryFilter;
import dev.afterglow.filters.synth.EventGenerationModel;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.ByteBuffer;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * The demo: the conveyor scene rendered by the ideal event generation model plus sensor noise,
 * streamed through a chain in sensor-time order, read out at a frame rate; prints one line of
 * numbers per frame and writes PNG snapshots (truth | reconstruction [| sensor frame]).
 */
@Command(name = "demo", mixinStandardHelpOptions = true,
        description = "Run the built-in synthetic conveyor scene through a chain; print per-frame numbers and write PNG snapshots.")
public final class DemoCommand implements Callable<Integer> {

    @Option(names = "--chain", paramLabel = "CHAIN",
            description = "Chain description (see 'afterglow stages'). Default: ${DEFAULT-VALUE}")
    String chain = "refractory(period=1ms) | background-activity(window=10ms) | high-pass(cutoff=3rad/s, contrast=0.2)";

    @Option(names = "--seconds", description = "Sensor time to simulate, 0.1 .. 120 s. Default: ${DEFAULT-VALUE}")
    double seconds = 3;

    @Option(names = "--width", description = "Sensor width, 16 .. 1280. Default: ${DEFAULT-VALUE}")
    int width = 320;

    @Option(names = "--height", description = "Sensor height, 16 .. 720. Default: ${DEFAULT-VALUE}")
    int height = 240;

    @Option(names = "--rate", description = "Frames per second read out, 1 .. 1000. Default: ${DEFAULT-VALUE}")
    double rateHz = 20;

    @Option(names = "--noise", description = "Background activity per pixel in Hz, 0 .. 100. Default: ${DEFAULT-VALUE}")
    double noiseHz = 1.0;

    @Option(names = "--hot-pixels", description = "Number of hot pixels, 0 .. 1000. Default: ${DEFAULT-VALUE}")
    int hotPixels = 6;

    @Option(names = "--out", description = "Folder for PNG snapshots. Default: ${DEFAULT-VALUE}")
    Path out = Path.of("demo-out");

    @Option(names = "--snapshot-every", description = "Write every N-th frame as PNG, 1 .. 1000 (0: none). Default: ${DEFAULT-VALUE}")
    int snapshotEvery = 10;

    @Option(names = "--seed", description = "Seed of the scene and noise. Default: ${DEFAULT-VALUE}")
    long seed = 7;

    private static final long STEP_US = 1_000;
    private static final double CONTRAST = 0.2;

    @Override
    public Integer call() throws IOException {
        validate();
        ChainSpec spec = ChainSpec.parse(chain);
        Chain built = Chain.build(spec, width, height);
        ConveyorScene scene = new ConveyorScene(width, height, width * 0.4, seed);
        EventGenerationModel model = new EventGenerationModel(width, height, CONTRAST);
        NoiseSource noise = new NoiseSource(width, height, noiseHz, hotPixels, 400, seed + 1);
        ComplementaryFilter fusion = built.reconstruction() instanceof ComplementaryFilter c ? c : null;
        PrintStream log = System.out;

        int pixels = width * height;
        double[] truthLog = new double[pixels];
        float[] truthFloat = new float[pixels];
        float[] reconLog = new float[pixels];
        byte[] truthGray = new byte[pixels];
        byte[] reconGray = new byte[pixels];
        byte[] sensorFrame = new byte[pixels];
        ToneMapper truthMapper = new ToneMapper(ToneMap.DEFAULT);
        ToneMapper reconMapper = new ToneMapper(ToneMap.DEFAULT);
        int capacity = Math.max(1 << 16, pixels * 8);
        EventBatch signal = new EventBatch(capacity);
        EventBatch noiseBatch = new EventBatch(capacity);
        EventBatch batch = new EventBatch(2 * capacity);
        if (snapshotEvery > 0) {
            Files.createDirectories(out);
        }

        log.printf(Locale.ROOT, "afterglow demo: conveyor scene %dx%d, %.1f s of sensor time, noise %.2f Hz/pixel, %d hot pixels%n",
                width, height, seconds, noiseHz, hotPixels);
        log.println("chain: " + spec);

        long endUs = Math.round(seconds * 1e6);
        long frameIntervalUs = Math.round(1e6 / rateHz);
        long sensorFrameIntervalUs = 50_000; // the sensor's own frames at 20 Hz, for fusion
        scene.logIntensity(0, truthLog);
        model.start(0, truthLog);
        long nextFrameUs = frameIntervalUs;
        long nextSensorFrameUs = 0;
        long processNs = 0;
        long readoutNs = 0;
        long totalEvents = 0;
        int frames = 0;
        long[] lastIn = new long[built.stages().size()];
        long[] lastOut = new long[built.stages().size()];
        long wallStart = System.nanoTime();
        for (long t = 0; t < endUs; ) {
            if (fusion != null && t >= nextSensorFrameUs) {
                scene.frame8(t, truthLog, sensorFrame);
                fusion.applyFrame(t, ByteBuffer.wrap(sensorFrame), 8);
                nextSensorFrameUs += sensorFrameIntervalUs;
            }
            long stepEnd = Math.min(Math.min(t + STEP_US, nextFrameUs), endUs);
            signal.reset(t);
            noiseBatch.reset(t);
            scene.logIntensity(stepEnd, truthLog);
            model.advance(stepEnd, truthLog, signal);
            noise.step(t, stepEnd, noiseBatch);
            BatchMerge.merge(signal, noiseBatch, batch);
            totalEvents += batch.size;
            long p0 = System.nanoTime();
            built.process(batch);
            processNs += System.nanoTime() - p0;
            t = stepEnd;
            if (t == nextFrameUs) {
                long r0 = System.nanoTime();
                built.reconstruction().readLog(t, reconLog);
                reconMapper.apply(reconLog, pixels, reconGray);
                long readout = System.nanoTime() - r0;
                readoutNs += readout;
                frames++;
                log.println(frameLine(t, built, lastIn, lastOut, readout));
                if (snapshotEvery > 0 && frames % snapshotEvery == 0) {
                    for (int i = 0; i < pixels; i++) {
                        truthFloat[i] = (float) truthLog[i];
                    }
                    truthMapper.apply(truthFloat, pixels, truthGray);
                    Path file = out.resolve(String.format(Locale.ROOT, "frame-%05d.png", frames));
                    if (fusion != null) {
                        GrayPng.writeSideBySide(file, width, height, truthGray, reconGray, sensorFrame);
                    } else {
                        GrayPng.writeSideBySide(file, width, height, truthGray, reconGray);
                    }
                }
                nextFrameUs += frameIntervalUs;
            }
        }
        double wallS = (System.nanoTime() - wallStart) * 1e-9;
        log.printf(Locale.ROOT, "done: %d events in %.1f s of sensor time; chain processed %.1f M events/s (own thread, excluding simulation); "
                        + "mean readout+tone map %.3f ms; %d frames; wall time %.1f s%n",
                totalEvents, seconds, totalEvents / Math.max(1e-9, processNs * 1e-9) / 1e6,
                frames == 0 ? 0 : readoutNs * 1e-6 / frames, frames, wallS);
        if (snapshotEvery > 0) {
            log.println("snapshots (left: true log intensity, middle: reconstruction"
                    + (fusion != null ? ", right: the sensor's own frame" : "") + ") in " + out.toAbsolutePath());
        }
        return 0;
    }

    private static String frameLine(long t, Chain chain, long[] lastIn, long[] lastOut, long readoutNs) {
        StringBuilder b = new StringBuilder(String.format(Locale.ROOT, "t=%7.3fs", t * 1e-6));
        List<EventStage> stages = chain.stages();
        for (int i = 0; i < stages.size(); i++) {
            EventStage s = stages.get(i);
            long in = s.counters().eventsIn() - lastIn[i];
            long outCount = s.counters().eventsOut() - lastOut[i];
            lastIn[i] = s.counters().eventsIn();
            lastOut[i] = s.counters().eventsOut();
            if (i == 0) {
                b.append(String.format(Locale.ROOT, "  events %7d", in));
            }
            if (i == stages.size() - 1) {
                b.append(String.format(Locale.ROOT, "  applied %7d", outCount));
            } else {
                b.append(String.format(Locale.ROOT, "  %s -%4.1f%%", s.name(), in == 0 ? 0.0 : 100.0 * (in - outCount) / in));
            }
        }
        b.append(String.format(Locale.ROOT, "  readout %.2f ms", readoutNs * 1e-6));
        return b.toString();
    }

    private void validate() {
        check(seconds >= 0.1 && seconds <= 120, "--seconds=" + seconds + " outside [0.1, 120]");
        check(width >= 16 && width <= 1280, "--width=" + width + " outside [16, 1280]");
        check(height >= 16 && height <= 720, "--height=" + height + " outside [16, 720]");
        check(rateHz >= 1 && rateHz <= 1000, "--rate=" + rateHz + " outside [1, 1000]");
        check(noiseHz >= 0 && noiseHz <= 100, "--noise=" + noiseHz + " outside [0, 100]");
        check(hotPixels >= 0 && hotPixels <= 1000, "--hot-pixels=" + hotPixels + " outside [0, 1000]");
        check(snapshotEvery >= 0 && snapshotEvery <= 1000, "--snapshot-every=" + snapshotEvery + " outside [0, 1000]");
    }

    private static void check(boolean ok, String message) {
        if (!ok) {
            throw new IllegalArgumentException(message);
        }
    }
}
