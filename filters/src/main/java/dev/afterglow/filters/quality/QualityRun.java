package dev.afterglow.filters.quality;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.DefaultChains;
import dev.afterglow.filters.readout.ToneMap;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.filters.recon.FrameFusion;
import dev.afterglow.filters.synth.EventLabel;
import dev.afterglow.filters.synth.Scene;
import dev.afterglow.filters.synth.SensorConfig;
import dev.afterglow.filters.synth.SensorFrame;
import dev.afterglow.filters.synth.SyntheticSensor;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * Runs several chains side by side over one synthetic sensor stream and scores each against the
 * ground truth: the engine of the quality report.
 *
 * <p>The sensor is stepped in 1 ms slices (split at the end of each frame exposure and at each
 * evaluation time). Every chain gets its own copy of each slice's events; sensor frames are
 * applied to every complementary filter at mid-exposure as soon as the exposure ends. At each
 * evaluation time every reconstruction is read out (timed together with an 8-bit tone map, the
 * readout a node would publish) and scored by {@link ImageQuality}. For chains with denoise
 * stages, the events that reach the reconstruction are matched back to the sensor's labels (the
 * stages keep event order, so survivors are found by one merge pass), which gives the share of
 * signal, background-activity and hot-pixel events each chain keeps.
 *
 * <p>Averages in {@link MethodResult} cover the evaluations at or after the warm-up time, when
 * the reconstructions have had time to settle. Single-threaded; the timings are wall-clock
 * ({@link System#nanoTime()}) of this thread's work on each chain.
 */
public final class QualityRun {
    /** Length of one processing slice of sensor time. */
    public static final long SLICE_US = 1_000;
    /**
     * Change of the true log intensity between two evaluations (natural-log units) above which a
     * pixel is in the moving region: half the usual contrast threshold (common practice: a change a
     * sensor would report).
     */
    public static final double MOVING_LOG = 0.1;

    /**
     * One chain to assess, or the flat baseline.
     *
     * @param label short name for tables and pictures
     * @param chain the chain description; null only for {@link #flat()}
     */
    public record Method(String label, ChainSpec chain) {
        /** Label of the flat baseline. */
        public static final String FLAT = "flat";

        /** Validates. */
        public Method {
            if (label == null || label.isBlank()) {
                throw new IllegalArgumentException("method label is empty");
            }
            if (chain == null && !FLAT.equals(label)) {
                throw new IllegalArgumentException("method " + label + ": no chain");
            }
        }

        /**
         * The flat baseline: a constant image, which the affine fit turns into the truth's mean. A
         * method that does not beat it shows nothing.
         */
        public static Method flat() {
            return new Method(FLAT, null);
        }

        /** Whether this is the flat baseline. */
        public boolean isFlat() {
            return chain == null;
        }

        /** The chain in description syntax, or a note for the flat baseline. */
        public String describe() {
            return chain == null ? "(a constant image)" : chain.toString();
        }
    }

    /**
     * What to run.
     *
     * @param scene the scene (its size must match the sensor's)
     * @param sensor the sensor settings
     * @param durationUs sensor time to simulate, &gt; 0
     * @param evaluationIntervalUs time between evaluations, &gt; 0
     * @param warmupUs evaluations before this time are reported but not averaged
     * @param snapshotTimesUs evaluation times at which {@link Observer#snapshot} is called
     * @param methods the chains to assess, at least one
     */
    public record Settings(Scene scene, SensorConfig sensor, long durationUs, long evaluationIntervalUs, long warmupUs,
            long[] snapshotTimesUs, List<Method> methods) {
        /** Validates. */
        public Settings {
            if (durationUs <= 0) {
                throw new IllegalArgumentException("duration " + durationUs + "us <= 0");
            }
            if (evaluationIntervalUs <= 0) {
                throw new IllegalArgumentException("evaluation interval " + evaluationIntervalUs + "us <= 0");
            }
            if (warmupUs < 0 || warmupUs >= durationUs) {
                throw new IllegalArgumentException("warm-up " + warmupUs + "us outside [0, duration " + durationUs + "us)");
            }
            if (methods == null || methods.isEmpty()) {
                throw new IllegalArgumentException("no methods to assess");
            }
            methods = List.copyOf(methods);
            snapshotTimesUs = snapshotTimesUs == null ? new long[0] : snapshotTimesUs.clone();
        }
    }

    /** Receives per-evaluation results as the run proceeds. Called on the running thread. */
    public interface Observer {
        /** One method scored at one evaluation time. */
        default void evaluated(long timeUs, int method, FrameQuality quality) {
        }

        /**
         * Images at a snapshot time: the truth and every method's fitted reconstruction on the
         * display range [0, 1] (see {@link ImageQuality}), and the latest sensor frame (null before
         * the first). Arrays are fresh copies the observer may keep.
         */
        default void snapshot(long timeUs, float[] truthDisplay, byte[] sensorFrame, float[][] methodDisplay,
                FrameQuality[] quality) {
        }
    }

    /** The standard six methods: each reconstruction alone and after the standard denoise stages. */
    public static List<Method> standardMethods(double contrast) {
        String c = String.format(Locale.ROOT, "contrast=%s", contrast);
        String denoise = STANDARD_DENOISE + " | ";
        List<Method> list = new ArrayList<>();
        list.add(new Method("direct", ChainSpec.parse("direct-integration(" + c + ")")));
        list.add(new Method("direct+dn", ChainSpec.parse(denoise + "direct-integration(" + c + ")")));
        list.add(new Method("high-pass", ChainSpec.parse("high-pass(cutoff=5rad/s, " + c + ")")));
        list.add(new Method("high-pass+dn", ChainSpec.parse(denoise + "high-pass(cutoff=5rad/s, " + c + ")")));
        list.add(new Method("complementary", ChainSpec.parse("complementary(cutoff=5rad/s, low-cutoff=0.5rad/s, " + c + ")")));
        list.add(new Method("complementary+dn",
                ChainSpec.parse(denoise + "complementary(cutoff=5rad/s, low-cutoff=0.5rad/s, " + c + ")")));
        return list;
    }

    /** Cut-off of the plain complementary filter baseline: one fixed 2π rad/s (1 Hz) everywhere. */
    public static final String PLAIN_COMPLEMENTARY_CUTOFF = "6.283185rad/s";

    /**
     * The benchmark's methods: what a user already has (the flat image; with frames, holding the
     * sensor's latest frame and the plain complementary filter with one fixed cut-off and no
     * denoise), the node's default chain for such a sensor ({@link DefaultChains}) and, for
     * comparison, the high-pass filter after the standard denoise stages.
     */
    public static List<Method> benchmarkMethods(double contrast, boolean frames) {
        String c = String.format(Locale.ROOT, "contrast=%s", contrast);
        List<Method> list = new ArrayList<>();
        list.add(Method.flat());
        if (frames) {
            list.add(new Method("hold-frame", ChainSpec.parse("hold-frame")));
            list.add(new Method("plain-comp", ChainSpec.parse("complementary(cutoff=" + PLAIN_COMPLEMENTARY_CUTOFF
                    + ", low-cutoff=" + PLAIN_COMPLEMENTARY_CUTOFF + ", " + c + ")")));
        }
        list.add(new Method("high-pass+dn", ChainSpec.parse(STANDARD_DENOISE + " | high-pass(cutoff=5rad/s, " + c + ")")));
        list.add(new Method("default", DefaultChains.forSensor(frames)));
        return list;
    }

    /**
     * The standard denoise stages: a refractory filter no longer than the sensor's own refractory
     * period (so it only thins noise bursts), and the background-activity filter with dT = 5 ms,
     * which passes an isolated 1 Hz noise event with probability 1 - exp(-8·1·0.005) ≈ 3.9%.
     */
    public static final String STANDARD_DENOISE = "refractory(period=100us) | background-activity(window=5ms)";

    private final Settings settings;

    /** A run of {@code settings}; nothing happens until {@link #run}. */
    public QualityRun(Settings settings) {
        this.settings = settings;
    }

    /**
     * The outcome of a run.
     *
     * @param methods one result per method, in the order given
     * @param signalEvents signal events the sensor emitted up to the end
     * @param backgroundEvents background-activity events the sensor emitted
     * @param hotPixelEvents hot-pixel events the sensor emitted
     * @param framesApplied sensor frames produced (and applied to each complementary filter)
     * @param sensorNs wall time spent simulating the sensor
     * @param scoringNs wall time spent scoring (fit, PSNR, SSIM)
     * @param totalNs wall time of the whole run
     */
    public record Report(List<MethodResult> methods, long signalEvents, long backgroundEvents, long hotPixelEvents,
            long framesApplied, long sensorNs, long scoringNs, long totalNs) {
        /** Events the sensor emitted in all. */
        public long sensorEvents() {
            return signalEvents + backgroundEvents + hotPixelEvents;
        }

        /**
         * This run pooled with {@code other}, the same methods on another seed: each method's
         * totals are added into this report's (see {@link MethodResult#pool}), and the sensor's
         * counts and times summed.
         */
        public Report pool(Report other) {
            for (int k = 0; k < methods.size(); k++) {
                methods.get(k).pool(other.methods.get(k));
            }
            return new Report(methods, signalEvents + other.signalEvents, backgroundEvents + other.backgroundEvents,
                    hotPixelEvents + other.hotPixelEvents, framesApplied + other.framesApplied, sensorNs + other.sensorNs,
                    scoringNs + other.scoringNs, totalNs + other.totalNs);
        }
    }

    /** Runs to the end. */
    public Report run(Observer observer) {
        long startNs = System.nanoTime();
        long sensorNs = 0;
        long scoringNs = 0;
        long frames = 0;
        Settings s = settings;
        Scene scene = s.scene();
        SyntheticSensor sensor = new SyntheticSensor(scene, s.sensor());
        int w = scene.width();
        int h = scene.height();
        int n = w * h;
        int m = s.methods().size();
        Chain[] chains = new Chain[m];
        FrameFusion[] fusion = new FrameFusion[m];
        boolean[] filters = new boolean[m];
        MethodResult[] results = new MethodResult[m];
        for (int k = 0; k < m; k++) {
            Method method = s.methods().get(k);
            chains[k] = method.isFlat() ? null : Chain.build(method.chain(), w, h);
            fusion[k] = chains[k] != null && chains[k].reconstruction() instanceof FrameFusion c ? c : null;
            filters[k] = chains[k] != null && chains[k].stages().size() > 1;
            results[k] = new MethodResult(method.label(), method.chain());
        }
        int capacity = 1 << 20;
        EventBatch batch = new EventBatch(capacity);
        EventBatch work = new EventBatch(capacity);
        float[] truth = new float[n];
        float[] recon = new float[n];
        byte[] gray = new byte[n];
        byte[] latestFrame = null;
        ToneMapper toneMapper = new ToneMapper(ToneMap.DEFAULT);
        ImageQuality quality = new ImageQuality(w, h);
        FlickerMeter flicker = new FlickerMeter(n, m);
        byte[] moving = new byte[n];
        long[] snapshots = s.snapshotTimesUs().clone();
        java.util.Arrays.sort(snapshots);
        int nextSnapshot = 0;

        long end = s.durationUs();
        long nextEval = s.evaluationIntervalUs();
        while (sensor.timeUs() < end) {
            long now = sensor.timeUs();
            long target = Math.min(Math.min(now + SLICE_US, end), Math.min(nextEval, sensor.nextFrameDueUs()));
            batch.reset(now);
            long s0 = System.nanoTime();
            sensor.step(target, batch);
            sensorNs += System.nanoTime() - s0;
            byte[] labels = sensor.labels();
            for (int k = 0; k < m; k++) {
                work.copyFrom(batch);
                long t0 = System.nanoTime();
                if (chains[k] != null) {
                    chains[k].process(work);
                }
                results[k].processNs += System.nanoTime() - t0;
                results[k].countSurvivors(batch, labels, work, filters[k]);
            }
            for (SensorFrame f; (f = sensor.pollFrame()) != null; ) {
                frames++;
                for (int k = 0; k < m; k++) {
                    if (fusion[k] != null) {
                        fusion[k].applyFrame(f.exposureStartUs(), f.exposureEndUs(), f.buffer(), 8);
                    }
                }
                if (latestFrame == null) {
                    latestFrame = new byte[n];
                }
                System.arraycopy(f.pixels(), 0, latestFrame, 0, n);
            }
            long t = sensor.timeUs();
            if (t == nextEval && t <= end) {
                long g0 = System.nanoTime();
                sensor.groundTruthLog(t, truth);
                scoringNs += System.nanoTime() - g0;
                boolean snap = nextSnapshot < snapshots.length && snapshots[nextSnapshot] <= t;
                float[][] displays = snap ? new float[m][] : null;
                FrameQuality[] scores = snap ? new FrameQuality[m] : null;
                float[] truthDisplay = null;
                flicker.truth(truth);
                flicker.moving(MOVING_LOG, moving);
                for (int k = 0; k < m; k++) {
                    long r0 = System.nanoTime();
                    if (chains[k] != null) {
                        chains[k].reconstruction().readLog(t, recon);
                    } else {
                        java.util.Arrays.fill(recon, 0f);
                    }
                    toneMapper.apply(recon, n, gray);
                    results[k].recordReadout(System.nanoTime() - r0);
                    long q0 = System.nanoTime();
                    FrameQuality q = quality.evaluate(truth, recon, moving);
                    scoringNs += System.nanoTime() - q0;
                    results[k].record(t, q, flicker.measure(k, recon, q.fit()), t >= s.warmupUs());
                    observer.evaluated(t, k, q);
                    if (snap) {
                        displays[k] = quality.fittedDisplay().clone();
                        scores[k] = q;
                        truthDisplay = quality.truthDisplay().clone();
                    }
                }
                if (snap) {
                    while (nextSnapshot < snapshots.length && snapshots[nextSnapshot] <= t) {
                        nextSnapshot++;
                    }
                    observer.snapshot(t, truthDisplay, latestFrame == null ? null : latestFrame.clone(), displays, scores);
                }
                nextEval += s.evaluationIntervalUs();
            }
        }
        for (Chain c : chains) {
            if (c != null) {
                c.close(); // a learned reconstruction's native session
            }
        }
        // Frame exposure is simulated inside step(); sensorNs includes it.
        // Every method saw the same events: count the emitted ones by label from the first.
        MethodResult any = results[0];
        return new Report(List.of(results), any.eventsIn(EventLabel.SIGNAL), any.eventsIn(EventLabel.BACKGROUND),
                any.eventsIn(EventLabel.HOT_PIXEL), frames, sensorNs, scoringNs, System.nanoTime() - startNs);
    }

    /** Per-method totals and averages of a run. */
    public static final class MethodResult {
        private final String label;
        private final ChainSpec chain;
        long processNs;
        private long eventsIn;
        private long eventsApplied;
        private final long[] labelIn = new long[3];
        private final long[] labelKept = new long[3];
        private int readouts;
        private long readoutNs;
        private long readoutMaxNs;
        private int averaged;
        private double psnrSum;
        private double ssimSum;
        private double maeSum;
        private double flickerSum;
        private int flickerCount;
        private double movingSsimSum;
        private int movingCount;
        private double lastSsim = Double.NaN;

        MethodResult(String label, ChainSpec chain) {
            this.label = label;
            this.chain = chain;
        }

        void countSurvivors(EventBatch in, byte[] labels, EventBatch out, boolean filters) {
            eventsIn += in.size;
            eventsApplied += out.size;
            if (!filters) {
                for (int i = 0; i < in.size; i++) {
                    labelIn[labels[i]]++;
                    labelKept[labels[i]]++;
                }
                return;
            }
            // Stages keep order, so the survivors are a subsequence of the input: merge once.
            int j = 0;
            for (int i = 0; i < in.size; i++) {
                byte l = labels[i];
                labelIn[l]++;
                if (j < out.size && out.t[j] + out.timeBaseUs == in.t[i] + in.timeBaseUs && out.x[j] == in.x[i]
                        && out.y[j] == in.y[i] && out.p[j] == in.p[i]) {
                    labelKept[l]++;
                    j++;
                }
            }
        }

        /**
         * Pools {@code other}'s totals into this one (the same method run on another seed): means
         * then cover the evaluations of both, shares the events of both.
         */
        public void pool(MethodResult other) {
            processNs += other.processNs;
            eventsIn += other.eventsIn;
            eventsApplied += other.eventsApplied;
            for (int i = 0; i < labelIn.length; i++) {
                labelIn[i] += other.labelIn[i];
                labelKept[i] += other.labelKept[i];
            }
            readouts += other.readouts;
            readoutNs += other.readoutNs;
            readoutMaxNs = Math.max(readoutMaxNs, other.readoutMaxNs);
            averaged += other.averaged;
            psnrSum += other.psnrSum;
            ssimSum += other.ssimSum;
            maeSum += other.maeSum;
            flickerSum += other.flickerSum;
            flickerCount += other.flickerCount;
            movingSsimSum += other.movingSsimSum;
            movingCount += other.movingCount;
            lastSsim = other.lastSsim;
        }

        void recordReadout(long ns) {
            readouts++;
            readoutNs += ns;
            readoutMaxNs = Math.max(readoutMaxNs, ns);
        }

        void record(long timeUs, FrameQuality q, double flicker, boolean average) {
            lastSsim = q.ssim();
            if (average) {
                averaged++;
                psnrSum += q.psnrDb();
                ssimSum += q.ssim();
                maeSum += q.maeLog();
                if (!Double.isNaN(flicker)) {
                    flickerSum += flicker;
                    flickerCount++;
                }
                if (!Double.isNaN(q.movingSsim())) {
                    movingSsimSum += q.movingSsim();
                    movingCount++;
                }
            }
        }

        /** The method's label. */
        public String label() {
            return label;
        }

        /** The chain. */
        public ChainSpec chain() {
            return chain;
        }

        /** Mean PSNR in dB over the averaged evaluations. */
        public double meanPsnrDb() {
            return psnrSum / averaged;
        }

        /** Mean SSIM over the averaged evaluations. */
        public double meanSsim() {
            return ssimSum / averaged;
        }

        /** Mean absolute error (natural-log units) over the averaged evaluations. */
        public double meanMaeLog() {
            return maeSum / averaged;
        }

        /**
         * Mean temporal flicker ({@link FlickerMeter}) over the averaged evaluations that had static
         * pixels, natural-log units; NaN if none had.
         */
        public double meanFlickerLog() {
            return flickerCount > 0 ? flickerSum / flickerCount : Double.NaN;
        }

        /**
         * Mean over the averaged evaluations of the SSIM map's mean where the true log image changed
         * by more than {@link #MOVING_LOG} since the previous evaluation (the moving region); NaN if
         * nothing moved.
         */
        public double meanMovingSsim() {
            return movingCount > 0 ? movingSsimSum / movingCount : Double.NaN;
        }

        /** SSIM at the last evaluation. */
        public double lastSsim() {
            return lastSsim;
        }

        /** Evaluations that entered the averages. */
        public int averagedEvaluations() {
            return averaged;
        }

        /** Events given to the chain. */
        public long eventsIn() {
            return eventsIn;
        }

        /** Events that reached the reconstruction. */
        public long eventsApplied() {
            return eventsApplied;
        }

        /** Wall time spent in the chain's {@code process}, nanoseconds. */
        public long processNs() {
            return processNs;
        }

        /** Events processed per second of processing time. */
        public double eventsPerSecond() {
            return processNs > 0 ? eventsIn / (processNs * 1e-9) : Double.NaN;
        }

        /** Mean readout (read log + 8-bit tone map) time in milliseconds. */
        public double meanReadoutMs() {
            return readouts > 0 ? readoutNs * 1e-6 / readouts : Double.NaN;
        }

        /** Longest readout time in milliseconds. */
        public double maxReadoutMs() {
            return readoutMaxNs * 1e-6;
        }

        /** Events of a label ({@link EventLabel}) given to the chain. */
        public long eventsIn(byte label) {
            return labelIn[label];
        }

        /** Events of a label that reached the reconstruction. */
        public long eventsKept(byte label) {
            return labelKept[label];
        }

        /** Share of the events of a label that reached the reconstruction (NaN if none came in). */
        public double keptFraction(byte label) {
            return labelIn[label] > 0 ? (double) labelKept[label] / labelIn[label] : Double.NaN;
        }
    }
}
