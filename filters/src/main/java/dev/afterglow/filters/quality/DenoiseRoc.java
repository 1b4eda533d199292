package dev.afterglow.filters.quality;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.synth.EventLabel;
import dev.afterglow.filters.synth.Scene;
import dev.afterglow.filters.synth.SensorConfig;
import dev.afterglow.filters.synth.SyntheticSensor;
import java.util.ArrayList;
import java.util.List;
import java.util.function.Function;

/**
 * Receiver operating characteristics of denoise stages: streams a synthetic sensor once and feeds
 * every slice to many denoisers side by side, each a family (one method) at one value of its
 * parameter, then matches each one's survivors back to the sensor's labels.
 *
 * <p>Per denoiser it gives the share of signal events kept, of background-activity events removed
 * and, separately, of hot-pixel events removed. Per family, the points (background activity
 * removed, signal kept) over the parameter form a {@link RocCurve} whose area is taken by the
 * trapezoid rule over noise removed in [0, 1], with the end points (removed 0, kept 1) for "pass
 * all" and (removed 1, kept 0) for "drop all" added to every curve.
 *
 * <p>The sensor runs in slices of {@link QualityRun#SLICE_US} with its own frames turned off (the
 * frames draw on their own random stream, so the events are the same as with frames). Every
 * denoiser gets its own copy of each slice. Counts accumulate over calls of {@link #run}, so
 * several seeds pool into one curve. Nothing is allocated per event; single-threaded.
 */
public final class DenoiseRoc {

    /** Builds one denoise stage for a sensor geometry. */
    @FunctionalInterface
    public interface StageFactory {
        /** A fresh stage for {@code width} x {@code height} pixels. */
        EventStage build(int width, int height);
    }

    /**
     * One member of a family: a parameter value and how to build the stage with it.
     *
     * @param value the parameter value as written, e.g. {@code 5ms}
     * @param description the stage in chain syntax, for tables and CSV
     * @param factory builds the stage
     */
    public record Candidate(String value, String description, StageFactory factory) {
    }

    /**
     * A denoise method swept over one parameter.
     *
     * @param name short name for tables, e.g. {@code background-activity}
     * @param parameter the parameter swept, e.g. {@code window}
     * @param candidates one per parameter value, at least one
     */
    public record Family(String name, String parameter, List<Candidate> candidates) {
        /** Validates. */
        public Family {
            if (candidates == null || candidates.isEmpty()) {
                throw new IllegalArgumentException("family " + name + " has no candidates");
            }
            candidates = List.copyOf(candidates);
        }

        /**
         * A family of chain-syntax stages: {@code chain.apply(value)} is the stage description for
         * each value (a single denoise stage, e.g. {@code background-activity(window=5ms)}).
         */
        public static Family ofChain(String name, String parameter, List<String> values, Function<String, String> chain) {
            List<Candidate> list = new ArrayList<>();
            for (String v : values) {
                String text = chain.apply(v);
                // Parsed with a reconstruction behind it, which the grammar requires; only the first stage is built.
                ChainSpec spec = ChainSpec.parse(text + " | direct-integration");
                if (spec.stages().size() != 2) {
                    throw new IllegalArgumentException("\"" + text + "\" is not one denoise stage");
                }
                String canonical = spec.stages().get(0).toString();
                list.add(new Candidate(v, canonical, (w, h) -> Chain.build(spec, w, h).stages().get(0)));
            }
            return new Family(name, parameter, list);
        }
    }

    /**
     * One denoiser's totals.
     *
     * @param candidate the denoiser
     * @param signalIn signal events it was given
     * @param signalKept signal events it passed
     * @param backgroundIn background-activity events it was given
     * @param backgroundKept background-activity events it passed
     * @param hotIn hot-pixel events it was given
     * @param hotKept hot-pixel events it passed
     */
    public record Point(Candidate candidate, long signalIn, long signalKept, long backgroundIn, long backgroundKept,
            long hotIn, long hotKept) {
        /** Share of signal kept (1 if there was none). */
        public double keptSignal() {
            return signalIn > 0 ? (double) signalKept / signalIn : 1;
        }

        /** Share of background activity removed (0 if there was none). */
        public double removedBackground() {
            return backgroundIn > 0 ? 1 - (double) backgroundKept / backgroundIn : 0;
        }

        /** Share of hot-pixel events removed (NaN if there were none). */
        public double removedHot() {
            return hotIn > 0 ? 1 - (double) hotKept / hotIn : Double.NaN;
        }
    }

    /**
     * A family's points, in the order of its candidates, and its curve.
     *
     * @param family the family
     * @param points one per candidate
     * @param curve background activity removed against signal kept
     */
    public record FamilyResult(Family family, List<Point> points, RocCurve curve) {
        /** Area under the curve. */
        public double area() {
            return curve.area();
        }

        /** The point keeping most signal among those removing at least {@code minRemoved}; null if none. */
        public Point bestAtRemoved(double minRemoved) {
            int i = curve.bestAtRemoved(minRemoved);
            return i < 0 ? null : points.get(i);
        }
    }

    /**
     * The windows every standard family is swept over: 0.1 ms to 1 s, about three per decade, dense
     * enough that the trapezoids follow the curve.
     */
    public static final List<String> WINDOWS = List.of("100us", "200us", "300us", "500us", "700us", "1ms", "1.5ms",
            "2ms", "3ms", "5ms", "7ms", "10ms", "15ms", "20ms", "30ms", "50ms", "70ms", "100ms", "150ms", "200ms",
            "300ms", "500ms", "1s");

    /** {@code background-activity} over its window. */
    public static Family backgroundActivity() {
        return Family.ofChain("background-activity", "window", WINDOWS, v -> "background-activity(window=" + v + ")");
    }

    /** {@code correlation} at {@code support} neighbours of 8, over its window. */
    public static Family correlation(int support) {
        return Family.ofChain("correlation k=" + support, "window", WINDOWS,
                v -> "correlation(window=" + v + ", support=" + support + ")");
    }

    /** {@code patch-support} at its default support and radius, over its window. */
    public static Family patchSupport() {
        return Family.ofChain("patch-support", "window", WINDOWS, v -> "patch-support(window=" + v + ")");
    }

    /** Background-activity, correlation at support 2 and 3, and patch-support, each over its window. */
    public static List<Family> standardFamilies() {
        return List.of(backgroundActivity(), correlation(2), correlation(3), patchSupport());
    }

    private final List<Family> families;
    private final int count;
    private final SurvivorTally[] tallies;

    /** A run over {@code families}; nothing happens until {@link #run}. */
    public DenoiseRoc(List<Family> families) {
        if (families == null || families.isEmpty()) {
            throw new IllegalArgumentException("no denoise families");
        }
        this.families = List.copyOf(families);
        int n = 0;
        for (Family f : this.families) {
            n += f.candidates().size();
        }
        this.count = n;
        this.tallies = new SurvivorTally[n];
        for (int i = 0; i < n; i++) {
            tallies[i] = new SurvivorTally();
        }
    }

    /**
     * Streams {@code durationUs} of {@code scene} seen by {@code sensor} through every candidate
     * (fresh stages) and adds the counts to the totals.
     */
    public void run(Scene scene, SensorConfig sensor, long durationUs) {
        if (durationUs <= 0) {
            throw new IllegalArgumentException("duration " + durationUs + "us <= 0");
        }
        if (scene.width() != sensor.width() || scene.height() != sensor.height()) {
            throw new IllegalArgumentException("scene " + scene.width() + "x" + scene.height() + " but sensor "
                    + sensor.width() + "x" + sensor.height());
        }
        int w = scene.width();
        int h = scene.height();
        EventStage[] stages = new EventStage[count];
        int k = 0;
        for (Family f : families) {
            for (Candidate c : f.candidates()) {
                stages[k++] = c.factory().build(w, h);
            }
        }
        SensorConfig eventsOnly = sensor.toBuilder().frames(0, sensor.exposureUs()).build();
        SyntheticSensor source = new SyntheticSensor(scene, eventsOnly);
        EventBatch batch = new EventBatch(1 << 18);
        EventBatch work = new EventBatch(1 << 18);
        while (source.timeUs() < durationUs) {
            long now = source.timeUs();
            batch.reset(now);
            source.step(Math.min(now + QualityRun.SLICE_US, durationUs), batch);
            if (batch.size == 0) {
                continue;
            }
            byte[] labels = source.labels();
            for (int i = 0; i < count; i++) {
                work.copyFrom(batch);
                stages[i].process(work);
                tallies[i].add(batch, labels, work);
            }
        }
    }

    /** The totals so far, one result per family in the order given. */
    public List<FamilyResult> results() {
        List<FamilyResult> out = new ArrayList<>();
        int k = 0;
        for (Family f : families) {
            List<Point> points = new ArrayList<>();
            int n = f.candidates().size();
            double[] removed = new double[n];
            double[] kept = new double[n];
            for (int i = 0; i < n; i++, k++) {
                SurvivorTally t = tallies[k];
                Point p = new Point(f.candidates().get(i), t.in(EventLabel.SIGNAL), t.kept(EventLabel.SIGNAL),
                        t.in(EventLabel.BACKGROUND), t.kept(EventLabel.BACKGROUND), t.in(EventLabel.HOT_PIXEL),
                        t.kept(EventLabel.HOT_PIXEL));
                points.add(p);
                removed[i] = p.removedBackground();
                kept[i] = p.keptSignal();
            }
            out.add(new FamilyResult(f, List.copyOf(points), new RocCurve(removed, kept)));
        }
        return out;
    }
}
