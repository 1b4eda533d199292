package dev.afterglow.filters.chain;

import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.denoise.BackgroundActivityFilter;
import dev.afterglow.filters.denoise.HotPixelFilter;
import dev.afterglow.filters.denoise.PatchSupportFilter;
import dev.afterglow.filters.denoise.RefractoryFilter;
import dev.afterglow.filters.learned.LearnedReconstruction;
import dev.afterglow.filters.recon.ComplementaryFilter;
import dev.afterglow.filters.recon.FrameNoiseModel;
import dev.afterglow.filters.recon.KalmanFusion;
import dev.afterglow.filters.recon.DirectIntegration;
import dev.afterglow.filters.recon.HighPassFilter;
import dev.afterglow.filters.recon.HoldFrame;
import java.util.List;

/**
 * The stages a chain description can name, with their parameters (units, defaults, limits) and how
 * each is built for a sensor geometry.
 */
public enum StageKind {
    /** {@link RefractoryFilter}. */
    REFRACTORY("refractory", false, List.of(
            new Param("period", Unit.TIME, 1_000, 1, 1_000_000, "refractory period after a passed event"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new RefractoryFilter(w, h, (int) s.get("period"));
        }
    },
    /** {@link HotPixelFilter}. */
    HOT_PIXEL("hot-pixel", false, List.of(
            new Param("learn", Unit.TIME, 2_000_000, 1_000, 600_000_000, "learning window"),
            new Param("factor", Unit.NUMBER, 20, 2, 1e6, "times the mean rate above which a pixel is hot"),
            new Param("min-rate", Unit.RATE, 20, 0, 1e6, "a hot pixel also fires at least this fast"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new HotPixelFilter(w, h, (long) s.get("learn"), s.get("factor"), s.get("min-rate"));
        }
    },
    /** {@link BackgroundActivityFilter} with one supporting neighbour. */
    BACKGROUND_ACTIVITY("background-activity", false, List.of(
            new Param("window", Unit.TIME, 2_000, 1, 1_000_000, "correlation window dT"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new BackgroundActivityFilter(w, h, (int) s.get("window"), 1);
        }
    },
    /** {@link BackgroundActivityFilter} requiring k of 8 supporting neighbours. */
    CORRELATION("correlation", false, List.of(
            new Param("window", Unit.TIME, 2_000, 1, 1_000_000, "correlation window dT"),
            new Param("support", Unit.INTEGER, 2, 1, 8, "neighbours (of 8) that must have fired within dT"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new BackgroundActivityFilter(w, h, (int) s.get("window"), (int) s.get("support"));
        }
    },
    /** {@link PatchSupportFilter}: weighted support from a (2r+1)x(2r+1) patch within dT. */
    PATCH_SUPPORT("patch-support", false, List.of(
            new Param("window", Unit.TIME, 10_000, 1, 1_000_000, "window dT"),
            new Param("support", Unit.INTEGER, 6, 1, PatchSupportFilter.maxSupport(PatchSupportFilter.MAX_RADIUS),
                    "weight needed from patch pixels that fired within dT; ring d weighs radius+1-d"),
            new Param("radius", Unit.INTEGER, 2, 1, PatchSupportFilter.MAX_RADIUS, "patch radius r: (2r+1)x(2r+1) pixels"),
            new Param("fill", Unit.NUMBER, 0, 0, 10, "0: fixed window; otherwise the window shrinks so that the mean event "
                    + "rate per pixel times the window stays at most this (a busy, noisy stream gets a shorter window)"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new PatchSupportFilter(w, h, (int) s.get("window"), (int) s.get("support"), (int) s.get("radius"),
                    s.get("fill"));
        }

        @Override
        void checkTogether(StageSpec s) {
            int r = (int) s.get("radius");
            int most = PatchSupportFilter.maxSupport(r);
            if (s.get("support") > most) {
                throw new ChainSpecException("patch-support.support=" + (int) s.get("support") + " > " + most
                        + ", the weight of a whole " + (2 * r + 1) + "x" + (2 * r + 1) + " patch (patch-support.radius=" + r + ")");
            }
        }
    },
    /** {@link DirectIntegration}. */
    DIRECT_INTEGRATION("direct-integration", true, List.of(
            new Param("contrast", Unit.NUMBER, 0.2, 0.01, 2, "contrast threshold C in log units"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new DirectIntegration(w, h, s.get("contrast"));
        }
    },
    /** {@link HighPassFilter}. */
    HIGH_PASS("high-pass", true, List.of(
            new Param("cutoff", Unit.FREQUENCY, 5, 1e-3, 1e4, "cut-off a"),
            new Param("contrast", Unit.NUMBER, 0.2, 0.01, 2, "contrast threshold C in log units"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new HighPassFilter(w, h, s.get("contrast"), s.get("cutoff"));
        }
    },
    /** {@link HoldFrame}: the sensor's latest own frame, events ignored (the baseline fusion must beat). */
    HOLD_FRAME("hold-frame", true, List.of()) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new HoldFrame(w, h);
        }
    },
    /** {@link KalmanFusion}: per-pixel uncertainty-weighted fusion of events and the sensor's frames. */
    KALMAN_FUSION("kalman-fusion", true, List.of(
            new Param("contrast", Unit.NUMBER, 0.2, 0.01, 2, "contrast threshold C in log units"),
            new Param("process-noise", Unit.NUMBER, 0.02, 1e-6, 1e4, "q: how fast the scene may drift, log units squared per second"),
            new Param("event-noise", Unit.NUMBER, 0.6, 0, 10, "standard deviation of one event's step, as a fraction of C"),
            new Param("shot-gain", Unit.NUMBER, 0.5, 0, 100, "frame shot noise: variance per count of signal, in 8-bit counts"),
            new Param("read-noise", Unit.NUMBER, 2, 0, 100, "frame read noise, standard deviation in 8-bit counts"),
            new Param("saturated", Unit.NUMBER, 0.98, 0.01, 1, "fraction of full scale at and above which a frame pixel carries no measurement"),
            new Param("learn-noise", Unit.INTEGER, 1, 0, 1, "1: learn read noise and shot gain from the sensor's frames "
                    + "(starting from the values given); 0: keep the values given"),
            new Param("frame-smoothing", Unit.INTEGER, 1, 0, 8, "radius of the adaptive (local-statistics) denoising of each "
                    + "sensor frame before it is fused; 0: off"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new KalmanFusion(w, h, s.get("contrast"), s.get("process-noise"), s.get("event-noise"),
                    new FrameNoiseModel(s.get("shot-gain"), s.get("read-noise"), s.get("saturated")),
                    s.get("learn-noise") == 1, (int) s.get("frame-smoothing"), s.toString());
        }
    },
    /**
     * {@link LearnedReconstruction}: a recurrent network (an ONNX model) run on event voxel grids;
     * the model is loaded and checked against the contract when the chain is built.
     */
    LEARNED_RECON("learned-recon", true, List.of(
            Param.text("model", LearnedReconstruction.BUILTIN,
                    "ONNX model file following the model contract, or builtin (the model shipped with the node)"),
            new Param("rate", Unit.RATE, 20, 0.1, 1000, "inferences per second; frames in between repeat the last output"),
            new Param("threads", Unit.INTEGER, 2, 1, 64, "ONNX Runtime intra-op threads (the calling thread included)"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            long periodUs = Math.max(1, Math.round(1e6 / s.get("rate")));
            return LearnedReconstruction.open(s.text("model"), periodUs, (int) s.get("threads"), w, h);
        }
    },
    /** {@link ComplementaryFilter}. */
    COMPLEMENTARY("complementary", true, List.of(
            new Param("cutoff", Unit.FREQUENCY, 5, 1e-3, 1e4, "cut-off a where the sensor frame is well exposed"),
            new Param("low-cutoff", Unit.FREQUENCY, 0.5, 0, 1e4, "cut-off where the sensor frame is saturated or dark"),
            new Param("contrast", Unit.NUMBER, 0.2, 0.01, 2, "contrast threshold C in log units"),
            new Param("saturated", Unit.NUMBER, 0.95, 0.01, 1, "fraction of full scale at and above which a frame pixel is saturated"),
            new Param("dark", Unit.NUMBER, 0.05, 0, 0.99, "fraction of full scale at and below which a frame pixel is dark"))) {
        @Override
        EventStage build(StageSpec s, int w, int h) {
            return new ComplementaryFilter(w, h, s.get("contrast"), s.get("cutoff"), s.get("low-cutoff"),
                    s.get("saturated"), s.get("dark"));
        }

        @Override
        void checkTogether(StageSpec s) {
            if (s.get("low-cutoff") > s.get("cutoff")) {
                throw new ChainSpecException("complementary.low-cutoff=" + s.get("low-cutoff")
                        + "rad/s > complementary.cutoff=" + s.get("cutoff") + "rad/s");
            }
            if (s.get("dark") >= s.get("saturated")) {
                throw new ChainSpecException("complementary.dark=" + s.get("dark")
                        + " >= complementary.saturated=" + s.get("saturated"));
            }
        }
    };

    private final String label;
    private final boolean reconstruction;
    private final List<Param> params;

    StageKind(String label, boolean reconstruction, List<Param> params) {
        this.label = label;
        this.reconstruction = reconstruction;
        this.params = params;
    }

    /** Name as written in a description. */
    public String label() {
        return label;
    }

    /** True for the stages that reconstruct intensity (must be last in a chain). */
    public boolean reconstruction() {
        return reconstruction;
    }

    List<Param> params() {
        return params;
    }

    /** The parameter called {@code key}, or null. */
    Param param(String key) {
        for (Param p : params) {
            if (p.key().equals(key)) {
                return p;
            }
        }
        return null;
    }

    /** Builds the stage for a sensor of the given size. */
    abstract EventStage build(StageSpec spec, int width, int height);

    /** Checks constraints between parameters. */
    void checkTogether(StageSpec spec) {
    }

    /** The kind written as {@code label}, or null. */
    static StageKind byLabel(String label) {
        for (StageKind k : values()) {
            if (k.label.equals(label)) {
                return k;
            }
        }
        return null;
    }

    /** Every label, for error messages. */
    static String labels() {
        StringBuilder b = new StringBuilder();
        for (StageKind k : values()) {
            if (b.length() > 0) {
                b.append(", ");
            }
            b.append(k.label);
        }
        return b.toString();
    }

    /** Labels of the stages that reconstruct, for error messages. */
    static String reconstructionLabels() {
        StringBuilder b = new StringBuilder();
        for (StageKind k : values()) {
            if (k.reconstruction) {
                b.append(b.length() > 0 ? ", " : "").append(k.label);
            }
        }
        return b.toString();
    }

    /** One line per parameter with unit, default and limits, for help texts. */
    public String help() {
        StringBuilder b = new StringBuilder(label).append('\n');
        for (Param p : params) {
            if (p.isText()) {
                b.append("  ").append(p.key()).append(": ").append(p.help())
                        .append(" (text, default ").append(TextValue.format(p.defaultText())).append(")\n");
                continue;
            }
            b.append("  ").append(p.key()).append(": ").append(p.help())
                    .append(" (default ").append(p.format(p.defaultValue()))
                    .append(", ").append(p.format(p.min())).append(" .. ").append(p.format(p.max())).append(")\n");
        }
        return b.toString();
    }
}
