package dev.afterglow.node.assess;

import dev.afterglow.filters.quality.BenchmarkSeeds;
import dev.afterglow.filters.quality.DenoiseRoc;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SensorConfig;
import java.io.BufferedWriter;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.TreeSet;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * {@code afterglow denoise-roc}: receiver operating characteristics of the denoise stages. For each
 * scene and background-activity rate it streams the synthetic sensor once per seed, feeds every
 * slice to each denoise family at every window of {@link DenoiseRoc#WINDOWS} side by side, pools
 * the seeds, and prints per family the area under the curve of signal kept against background
 * activity removed and the point that keeps most signal while removing at least 90% of it. The
 * curve points go to a CSV file.
 */
@Command(name = "denoise-roc", mixinStandardHelpOptions = true, sortOptions = false,
        description = {"Signal kept against background activity removed for each denoise stage over its window, "
                + "on the synthetic scenes.",
                "AUC: trapezoids over noise removed in [0, 1] through the measured points and the end points "
                        + "(removed 0, kept 1) = pass all and (removed 1, kept 0) = drop all."})
public final class DenoiseRocCommand implements Callable<Integer> {
    /** Noise removed at the reported operating point. */
    static final double MIN_REMOVED = 0.9;

    @Option(names = "--scene", paramLabel = "NAME", description = "Scene (repeatable), or all. Default: all")
    List<String> scenes = new ArrayList<>();

    @Option(names = "--noise", paramLabel = "HZ", split = ",",
            description = "Background activity per pixel: 0.1 .. 100 Hz, or own for the scene's own rate "
                    + "(repeatable or comma-separated). Default: own,1,5")
    List<String> noise = new ArrayList<>(List.of("own", "1", "5"));

    @Option(names = "--seeds", paramLabel = "SET", description = "Seed set: tuning or validation. Default: ${DEFAULT-VALUE}")
    String seeds = "validation";

    @Option(names = "--seconds", description = "Sensor time per seed, 0.2 .. 60 s. Default: ${DEFAULT-VALUE}")
    double seconds = 4;

    @Option(names = "--width", description = "Sensor width, 32 .. 1280. Default: ${DEFAULT-VALUE}")
    int width = 320;

    @Option(names = "--height", description = "Sensor height, 24 .. 960. Default: ${DEFAULT-VALUE}")
    int height = 240;

    @Option(names = "--out", description = "Folder for the CSV of curve points. Default: ${DEFAULT-VALUE}")
    Path out = Path.of("denoise-roc-out");

    @Override
    public Integer call() throws IOException {
        List<SceneKind> kinds = kinds();
        long[] seedSet = seedSet();
        validate();
        List<DenoiseRoc.Family> families = new ArrayList<>(DenoiseRoc.standardFamilies());
        int curves = families.size();
        families.add(DenoiseRoc.Family.ofChain("defaults", "stage", List.of("patch-support", "background-activity"),
                v -> v.equals("patch-support") ? "patch-support" : "background-activity(window=5ms)"));
        long durationUs = Math.round(seconds * 1e6);
        Files.createDirectories(out);
        Path csv = out.resolve("denoise-roc.csv");
        PrintStream log = System.out;
        log.printf(Locale.ROOT, "afterglow denoise-roc: %dx%d, %s s per seed, %s seeds %s; windows %s .. %s%n", width, height,
                fmt(seconds), seeds, java.util.Arrays.toString(seedSet), DenoiseRoc.WINDOWS.get(0),
                DenoiseRoc.WINDOWS.get(DenoiseRoc.WINDOWS.size() - 1));
        try (BufferedWriter w = Files.newBufferedWriter(csv, StandardCharsets.UTF_8)) {
            w.write("scene,noise_hz,seeds,family,parameter,value,chain,background_removed,signal_kept,hot_removed,"
                    + "signal_events,background_events,hot_events\n");
            for (SceneKind kind : kinds) {
                for (double hz : rates(kind)) {
                    long t0 = System.nanoTime();
                    DenoiseRoc roc = new DenoiseRoc(families);
                    for (long seed : seedSet) {
                        SensorConfig sensor = kind.sensor(width, height).backgroundRateHz(hz).seed(seed).build();
                        roc.run(kind.create(width, height, seed), sensor, durationUs);
                    }
                    List<DenoiseRoc.FamilyResult> results = roc.results();
                    print(log, kind, hz, results, curves, (System.nanoTime() - t0) * 1e-9);
                    for (DenoiseRoc.FamilyResult r : results) {
                        for (DenoiseRoc.Point p : r.points()) {
                            w.write(String.format(Locale.ROOT, "%s,%s,%s,%s,%s,%s,\"%s\",%.6f,%.6f,%.6f,%d,%d,%d%n",
                                    kind.label(), fmt(hz), seeds, r.family().name(), r.family().parameter(),
                                    p.candidate().value(), p.candidate().description(), p.removedBackground(),
                                    p.keptSignal(), p.removedHot(), p.signalIn(), p.backgroundIn(), p.hotIn()));
                        }
                    }
                    w.flush();
                }
            }
        }
        log.println("wrote " + csv);
        return 0;
    }

    private void print(PrintStream log, SceneKind kind, double hz, List<DenoiseRoc.FamilyResult> results, int curves,
            double wallS) {
        DenoiseRoc.Point any = results.get(0).points().get(0);
        log.printf(Locale.ROOT, "%n%s%s, background activity %s Hz/pixel: %d signal, %d background, %d hot-pixel events (%.1f s)%n",
                kind.label(), kind.slow() ? " (slow)" : "", fmt(hz), any.signalIn(), any.backgroundIn(), any.hotIn(), wallS);
        log.printf(Locale.ROOT, "  %-22s %7s   %-30s%n", "family", "AUC", "at >= 90% removed: window, signal kept, BA removed, hot removed");
        for (int i = 0; i < curves; i++) {
            DenoiseRoc.FamilyResult r = results.get(i);
            DenoiseRoc.Point best = r.bestAtRemoved(MIN_REMOVED);
            log.printf(Locale.ROOT, "  %-22s %7.4f   %s%n", r.family().name(), r.area(), best == null ? "none reaches 90%"
                    : String.format(Locale.ROOT, "%-6s %6.1f%% %6.1f%% %6.1f%%", best.candidate().value(),
                            100 * best.keptSignal(), 100 * best.removedBackground(), 100 * best.removedHot()));
        }
        for (int i = curves; i < results.size(); i++) {
            for (DenoiseRoc.Point p : results.get(i).points()) {
                log.printf(Locale.ROOT, "  default %-52s signal kept %5.1f%%, BA removed %5.1f%%, hot removed %5.1f%%%n",
                        p.candidate().description(), 100 * p.keptSignal(), 100 * p.removedBackground(), 100 * p.removedHot());
            }
        }
    }

    private List<SceneKind> kinds() {
        if (scenes.isEmpty() || scenes.contains("all")) {
            return List.of(SceneKind.values());
        }
        List<SceneKind> list = new ArrayList<>();
        for (String s : scenes) {
            if (!SceneKind.labels().contains(s)) {
                throw new IllegalArgumentException("--scene=" + s + ": unknown; expected all or one of "
                        + String.join(", ", SceneKind.labels()));
            }
            SceneKind k = SceneKind.byLabel(s);
            if (!list.contains(k)) {
                list.add(k);
            }
        }
        return list;
    }

    private long[] seedSet() {
        if (!seeds.equals("tuning") && !seeds.equals("validation")) {
            throw new IllegalArgumentException("--seeds=" + seeds + ": expected tuning or validation");
        }
        return BenchmarkSeeds.named(seeds);
    }

    /** The rates to run for {@code kind}, each once, in increasing order. */
    private TreeSet<Double> rates(SceneKind kind) {
        TreeSet<Double> set = new TreeSet<>();
        for (String n : noise) {
            set.add(n.equals("own") ? kind.sensor(width, height).backgroundRateHz() : Double.parseDouble(n));
        }
        return set;
    }

    private void validate() {
        check(seconds >= 0.2 && seconds <= 60, "--seconds=" + seconds + " outside [0.2, 60]");
        check(width >= 32 && width <= 1280, "--width=" + width + " outside [32, 1280]");
        check(height >= 24 && height <= 960, "--height=" + height + " outside [24, 960]");
        for (String n : noise) {
            if (n.equals("own")) {
                continue;
            }
            double hz;
            try {
                hz = Double.parseDouble(n);
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException("--noise=" + n + ": expected own or a rate in Hz");
            }
            check(hz >= 0.1 && hz <= 100, "--noise=" + n + " outside [0.1, 100]");
        }
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
