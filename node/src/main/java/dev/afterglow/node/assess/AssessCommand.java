package dev.afterglow.node.assess;

import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.StageSpec;
import dev.afterglow.filters.quality.BenchmarkSeeds;
import dev.afterglow.filters.quality.FlickerMeter;
import dev.afterglow.filters.quality.FrameQuality;
import dev.afterglow.filters.quality.QualityRun;
import dev.afterglow.filters.quality.QualityRun.MethodResult;
import dev.afterglow.filters.synth.EventLabel;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SensorConfig;
import java.io.BufferedWriter;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * {@code afterglow assess}: the reconstruction quality report. Streams one of the built-in scenes
 * through the synthetic sensor into several chains at once (by default each reconstruction with and
 * without the standard denoise stages), scores every chain against the ground truth at a fixed
 * rate, prints a table, and writes the metrics over time as CSV and a labelled PNG contact sheet.
 */
@Command(name = "assess", mixinStandardHelpOptions = true, sortOptions = false,
        description = {"Score reconstruction chains against the ground truth of a synthetic scene.",
                "Each log image is fitted to the true log image by a per-frame least-squares affine fit, then the "
                        + "truth's min..max is mapped to [0, 1]; PSNR (peak 1) and SSIM (Wang et al. 2004: Gaussian "
                        + "sigma 1.5, K1 0.01, K2 0.03) are computed there, MAE in natural-log units."})
public final class AssessCommand implements Callable<Integer> {

    @Option(names = "--scene", paramLabel = "NAME", description = "Scene: parcel-line, dock-door, orchard-pan, floodlit-hoist, "
            + "stockroom-pan or rink-shot, each also as NAME_dark (8x less light). The scene sets the sensor's conditions; "
            + "the options below change them. Default: ${DEFAULT-VALUE}")
    String scene = SceneKind.PARCEL_LINE.label();

    @Option(names = "--seconds", description = "Sensor time to simulate, 0.5 .. 120 s. Default: ${DEFAULT-VALUE}")
    double seconds = 5;

    @Option(names = "--width", description = "Sensor width, 32 .. 1280. Default: ${DEFAULT-VALUE}")
    int width = 640;

    @Option(names = "--height", description = "Sensor height, 24 .. 960. Default: ${DEFAULT-VALUE}")
    int height = 480;

    @Option(names = "--chain", paramLabel = "CHAIN",
            description = "A chain to assess (repeatable; see 'afterglow stages'). The flat image and, with frames, the held "
                    + "sensor frame are always scored too. Default: the plain complementary filter with a fixed cut-off of 2π "
                    + "rad/s (with frames), the high-pass filter after '" + QualityRun.STANDARD_DENOISE + "' and the node's "
                    + "default chain for the sensor.")
    List<String> chains = new ArrayList<>();

    @Option(names = "--eval-rate", description = "Evaluations per second of sensor time, 0.5 .. 50 Hz. Default: ${DEFAULT-VALUE}")
    double evalRateHz = 5;

    @Option(names = "--warmup", description = "Seconds before evaluations enter the averages, 0 .. below --seconds. Default: ${DEFAULT-VALUE}")
    double warmupS = 1;

    @Option(names = "--snapshots", description = "Rows of the contact sheet, 0 .. 8. Default: ${DEFAULT-VALUE}")
    int snapshots = 3;

    // Sensor options are null unless given: the scene's conditions (SceneKind.sensor) apply.
    @Option(names = "--noise", description = "Background activity per pixel, 0 .. 100 Hz. Default: the scene's "
            + "(1 Hz; stockroom-pan 5 Hz; _dark variants x3).")
    Double noiseHz;

    @Option(names = "--hot-pixels", description = "Number of hot pixels (500 Hz each), 0 .. 1000. Default: the scene's (5).")
    Integer hotPixels;

    @Option(names = "--contrast", description = "Sensor contrast threshold C in log units, 0.05 .. 1; also the chains' "
            + "default contrast. Default: the scene's (0.2).")
    Double contrast;

    @Option(names = "--mismatch", description = "Threshold mismatch (standard deviation as a fraction of C), 0 .. 0.5. "
            + "Default: the scene's (0.03).")
    Double mismatch;

    @Option(names = "--frame-rate", description = "Rate of the sensor's own frames, 0 (none) .. 200 Hz. Default: the scene's (20 Hz).")
    Double frameRateHz;

    @Option(names = "--exposure", description = "Exposure of each sensor frame in ms, 0.01 .. the frame interval. "
            + "Default: the scene's (10 ms).")
    Double exposureMs;

    @Option(names = "--seeds", paramLabel = "SET", description = "Seeds of the scene and the sensor: 'validation' (the "
            + "seeds figures are reported on), 'tuning' (the seeds defaults are chosen on) or a comma-separated list; "
            + "scores are pooled over the seeds. Default: ${DEFAULT-VALUE}")
    String seeds = "validation";

    @Option(names = "--out", description = "Folder for the CSV and the PNG. Default: ${DEFAULT-VALUE}")
    Path out = Path.of("assess-out");

    @Override
    public Integer call() throws IOException {
        validate();
        SceneKind kind = SceneKind.byLabel(scene);
        SensorConfig sensor = sensor(kind);
        List<QualityRun.Method> methods = methods(sensor.contrast(), sensor.frameRateHz() > 0);
        long[] seedList = seedList();
        long durationUs = Math.round(seconds * 1e6);
        long intervalUs = Math.round(1e6 / evalRateHz);
        long[] snaps = new long[snapshots];
        for (int k = 0; k < snapshots; k++) {
            snaps[k] = durationUs * (k + 1) / snapshots;
        }
        Files.createDirectories(out);
        Path csv = out.resolve(kind.label() + "-metrics.csv");
        Path png = out.resolve(kind.label() + "-contact.png");
        PrintStream log = System.out;
        log.printf(Locale.ROOT, "afterglow assess: scene %s %dx%d (%s), %.1f s of sensor time, seeds %s (%s)%n",
                kind.label(), width, height, kind.summary(), seconds, joined(seedList), seeds);
        log.printf(Locale.ROOT, "sensor: C=%s with %.0f%% mismatch, refractory %d us, background activity %s Hz/pixel, "
                        + "%d hot pixels at %s Hz, jitter %s us, frames %s Hz with %s ms exposure (8-bit, full scale %s, read noise %s)%n",
                fmt(sensor.contrast()), sensor.mismatch() * 100, sensor.refractoryUs(), fmt(sensor.backgroundRateHz()),
                sensor.hotPixels(), fmt(sensor.hotPixelRateHz()), fmt(sensor.jitterUs()), fmt(sensor.frameRateHz()),
                fmt(sensor.exposureUs() / 1000.0), fmt(sensor.fullScale()), fmt(sensor.readNoiseDn()));

        ContactSheet sheet = new ContactSheet(width, height, methods.stream().map(QualityRun.Method::label).toList());
        QualityRun.Report report = null;
        List<double[]> perSeedSsim = new ArrayList<>();
        try (BufferedWriter w = Files.newBufferedWriter(csv, StandardCharsets.UTF_8)) {
            w.write("seed,time_s,method,ssim,moving_ssim,psnr_db,mae_log,fit_scale,fit_offset,chain\n");
            for (int si = 0; si < seedList.length; si++) {
                long seed = seedList[si];
                boolean pictures = si == 0;
                QualityRun run = new QualityRun(new QualityRun.Settings(kind.create(width, height, seed),
                        sensor.toBuilder().seed(seed).build(), durationUs, intervalUs, Math.round(warmupS * 1e6),
                        pictures ? snaps : new long[0], methods));
                QualityRun.Report one = run.run(new QualityRun.Observer() {
                    @Override
                    public void evaluated(long timeUs, int method, FrameQuality q) {
                        try {
                            w.write(String.format(Locale.ROOT, "%d,%.3f,%s,%.6f,%.6f,%.4f,%.6f,%.6g,%.6g,\"%s\"%n", seed,
                                    timeUs * 1e-6, methods.get(method).label(), q.ssim(), q.movingSsim(), q.psnrDb(), q.maeLog(),
                                    q.fit().scale(), q.fit().offset(), methods.get(method).describe()));
                        } catch (IOException e) {
                            throw new java.io.UncheckedIOException(e);
                        }
                    }

                    @Override
                    public void snapshot(long timeUs, float[] truth, byte[] frame, float[][] display, FrameQuality[] quality) {
                        double[] ssim = new double[quality.length];
                        for (int k = 0; k < quality.length; k++) {
                            ssim[k] = quality[k].ssim();
                        }
                        sheet.add(timeUs, truth, frame, display, ssim);
                    }
                });
                perSeedSsim.add(one.methods().stream().mapToDouble(MethodResult::meanSsim).toArray());
                report = report == null ? one : report.pool(one);
            }
        }
        printTable(log, report, methods, durationUs * seedList.length, intervalUs);
        if (seedList.length > 1) {
            log.print("SSIM per seed:");
            for (int k = 0; k < methods.size(); k++) {
                StringBuilder b = new StringBuilder();
                for (double[] ssim : perSeedSsim) {
                    b.append(b.length() == 0 ? "" : " / ").append(String.format(Locale.ROOT, "%.4f", ssim[k]));
                }
                log.printf(Locale.ROOT, "%n  %-16s %s", methods.get(k).label(), b);
            }
            log.printf(Locale.ROOT, "  (seeds %s)%n", joined(seedList));
        }
        if (snapshots > 0) {
            List<String> notes = new ArrayList<>();
            notes.add(String.format(Locale.ROOT, "afterglow assess: scene %s %dx%d, seed %d, background activity %s hz/pixel, "
                    + "%d hot pixels.", kind.label(), width, height, seedList[0], fmt(sensor.backgroundRateHz()), sensor.hotPixels()));
            notes.add("Each log image after a per-frame least-squares affine fit to the true log image; black..white = "
                    + "the truth's min..max in that frame. +dn: after " + QualityRun.STANDARD_DENOISE + ".");
            sheet.write(png, notes);
        }
        log.println("wrote " + csv + (snapshots > 0 ? " and " + png : ""));
        return 0;
    }

    private void printTable(PrintStream log, QualityRun.Report report, List<QualityRun.Method> methods, long durationUs, long intervalUs) {
        double simS = durationUs * 1e-6;
        log.printf(Locale.ROOT, "sensor emitted %d events (%.2f M/s: signal %.2f M/s, background activity %.2f M/s, hot pixels %.3f M/s) "
                        + "and %d frames; simulating took %.1f s, scoring %.1f s, all %.1f s%n",
                report.sensorEvents(), report.sensorEvents() / simS / 1e6, report.signalEvents() / simS / 1e6,
                report.backgroundEvents() / simS / 1e6, report.hotPixelEvents() / simS / 1e6, report.framesApplied(),
                report.sensorNs() * 1e-9, report.scoringNs() * 1e-9, report.totalNs() * 1e-9);
        MethodResult first = report.methods().get(0);
        log.printf(Locale.ROOT, "Scores after a per-frame least-squares affine fit of each log image to the true log image; "
                        + "PSNR and SSIM on the truth's min..max mapped to [0, 1], MAE in log units; mean of %d evaluations "
                        + "at %s Hz from t=%.1f s.%n",
                first.averagedEvaluations(), fmt(1e6 / intervalUs), warmupS);
        log.printf(Locale.ROOT, "%-18s %7s %7s %8s %8s %8s %8s %8s %8s %9s %15s%n", "method", "SSIM", "moving", "PSNR dB",
                "MAE log", "flicker", "signal", "BA", "hot px", "M ev/s", "readout ms");
        log.printf(Locale.ROOT, "%-18s %7s %7s %8s %8s %8s %8s %8s %8s %9s %15s%n", "", "", "SSIM", "", "", "log", "kept",
                "removed", "removed", "processed", "mean / max");
        for (MethodResult r : report.methods()) {
            log.printf(Locale.ROOT, "%-18s %7.4f %7.4f %8.2f %8.4f %8.4f %7.1f%% %7.1f%% %7.1f%% %9.1f %7.2f / %5.2f%n", r.label(),
                    r.meanSsim(), r.meanMovingSsim(), r.meanPsnrDb(), r.meanMaeLog(), r.meanFlickerLog(), 100 * r.keptFraction(EventLabel.SIGNAL),
                    percentRemoved(r, EventLabel.BACKGROUND), percentRemoved(r, EventLabel.HOT_PIXEL),
                    r.eventsPerSecond() / 1e6, r.meanReadoutMs(), r.maxReadoutMs());
        }
        log.println("moving SSIM = the SSIM map's mean over the pixels whose true log intensity changed by more than "
                + QualityRun.MOVING_LOG + " since the previous evaluation (the same fit; NaN if nothing moved).");
        log.println("flicker = mean absolute change of the fitted log image between consecutive evaluations where the "
                + "true log image changed by less than " + FlickerMeter.STATIC_LOG + "; readout = reconstruction read out "
                + "at the frame time plus the 8-bit tone map; M ev/s = events through the chain per second of this thread's time in it.");
        for (QualityRun.Method m : methods) {
            log.printf(Locale.ROOT, "  %-16s = %s%n", m.label(), m.describe());
        }
    }

    private static double percentRemoved(MethodResult r, byte label) {
        double kept = r.keptFraction(label);
        return Double.isNaN(kept) ? Double.NaN : 100 * (1 - kept);
    }

    /** The scene's sensor conditions with the options given on top. */
    private SensorConfig sensor(SceneKind kind) {
        SensorConfig scene = kind.sensor(width, height).seed(seedList()[0]).build();
        SensorConfig.Builder b = scene.toBuilder();
        if (contrast != null) {
            b.contrast(contrast);
        }
        if (mismatch != null) {
            b.mismatch(mismatch);
        }
        if (noiseHz != null) {
            b.backgroundRateHz(noiseHz);
        }
        if (hotPixels != null) {
            b.hotPixels(hotPixels, scene.hotPixelRateHz());
        }
        double rate = frameRateHz != null ? frameRateHz : scene.frameRateHz();
        double exposure = exposureMs != null ? exposureMs : scene.exposureUs() / 1000.0;
        double intervalMs = rate > 0 ? 1000 / rate : 1000;
        check(exposure >= 0.01 && exposure <= Math.floor(intervalMs * 1000) / 1000,
                "--exposure=" + exposure + " outside [0.01, " + fmt(Math.floor(intervalMs * 1000) / 1000) + "] ms (the frame interval)");
        b.frames(rate, (int) Math.round(exposure * 1000));
        return b.build();
    }

    private List<QualityRun.Method> methods(double contrast, boolean frames) {
        if (chains.isEmpty()) {
            return QualityRun.benchmarkMethods(contrast, frames);
        }
        // The baselines head every table, so each row shows what its method adds.
        List<QualityRun.Method> list = new ArrayList<>();
        list.add(QualityRun.Method.flat());
        Map<String, Integer> used = new HashMap<>();
        used.put(QualityRun.Method.FLAT, 1);
        if (frames && chains.stream().noneMatch(c -> ChainSpec.parse(c).equals(ChainSpec.parse("hold-frame")))) {
            list.add(new QualityRun.Method("hold-frame", ChainSpec.parse("hold-frame")));
            used.put("hold-frame", 1);
        }
        for (String text : chains) {
            ChainSpec spec = ChainSpec.parse(text);
            List<StageSpec> stages = spec.stages();
            String recon = stages.get(stages.size() - 1).kind().label();
            String label = (recon.equals("direct-integration") ? "direct" : recon) + (stages.size() > 1 ? "+dn" : "");
            int n = used.merge(label, 1, Integer::sum);
            list.add(new QualityRun.Method(n == 1 ? label : label + "#" + n, spec));
        }
        return list;
    }

    private long[] seedList() {
        if (seeds.equals("validation") || seeds.equals("tuning")) {
            return BenchmarkSeeds.named(seeds);
        }
        String[] parts = seeds.split(",");
        long[] list = new long[parts.length];
        for (int i = 0; i < parts.length; i++) {
            try {
                list[i] = Long.parseLong(parts[i].trim());
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException("--seeds=" + seeds + ": expected validation, tuning or numbers separated by commas");
            }
        }
        return list;
    }

    private static String joined(long[] values) {
        StringBuilder b = new StringBuilder();
        for (long v : values) {
            b.append(b.length() == 0 ? "" : ",").append(v);
        }
        return b.toString();
    }

    private void validate() {
        if (!SceneKind.labels().contains(scene)) {
            throw new IllegalArgumentException("--scene=" + scene + ": unknown; expected one of " + String.join(", ", SceneKind.labels()));
        }
        check(seconds >= 0.5 && seconds <= 120, "--seconds=" + seconds + " outside [0.5, 120]");
        check(width >= 32 && width <= 1280, "--width=" + width + " outside [32, 1280]");
        check(height >= 24 && height <= 960, "--height=" + height + " outside [24, 960]");
        check(evalRateHz >= 0.5 && evalRateHz <= 50, "--eval-rate=" + evalRateHz + " outside [0.5, 50]");
        check(warmupS >= 0 && warmupS < seconds, "--warmup=" + warmupS + " outside [0, --seconds=" + seconds + ")");
        check(evalRateHz * (seconds - warmupS) >= 1, "--eval-rate=" + evalRateHz + " leaves no evaluation after --warmup="
                + warmupS + " within --seconds=" + seconds);
        check(snapshots >= 0 && snapshots <= 8, "--snapshots=" + snapshots + " outside [0, 8]");
        check(noiseHz == null || noiseHz >= 0 && noiseHz <= 100, "--noise=" + noiseHz + " outside [0, 100]");
        check(hotPixels == null || hotPixels >= 0 && hotPixels <= 1000, "--hot-pixels=" + hotPixels + " outside [0, 1000]");
        check(hotPixels == null || hotPixels <= width * height / 10, "--hot-pixels=" + hotPixels + " > 10% of the "
                + width * height + " pixels");
        check(contrast == null || contrast >= 0.05 && contrast <= 1, "--contrast=" + contrast + " outside [0.05, 1]");
        check(mismatch == null || mismatch >= 0 && mismatch <= 0.5, "--mismatch=" + mismatch + " outside [0, 0.5]");
        check(frameRateHz == null || frameRateHz >= 0 && frameRateHz <= 200, "--frame-rate=" + frameRateHz + " outside [0, 200]");
        seedList();
        check(!Files.exists(out) || Files.isDirectory(out), "--out=" + out + " exists and is not a folder");
    }

    private static void check(boolean ok, String message) {
        if (!ok) {
            throw new IllegalArgumentException(message);
        }
    }

    private static String fmt(double v) {
        return v == Math.rint(v) && Math.abs(v) < 1e9 ? Long.toString((long) v) : String.format(Locale.ROOT, "%s", v);
    }
}
