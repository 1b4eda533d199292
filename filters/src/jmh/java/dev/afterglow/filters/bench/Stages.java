package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.recon.ComplementaryFilter;

/**
 * Builds single stages for the benchmarks through the project's own chain descriptions, with the
 * default parameters written out so the report shows what was measured.
 */
final class Stages {
    private Stages() {
    }

    /** The chain description measured for each benchmark stage name. */
    static String description(String stage) {
        switch (stage) {
            case "refractory":
                return "refractory(period=1ms)";
            case "hot-pixel":
                return "hot-pixel(learn=2s, factor=20, min-rate=20Hz)";
            case "background-activity":
                return "background-activity(window=2ms)";
            case "correlation":
                return "correlation(window=2ms, support=2)";
            case "patch-support":
                return "patch-support(window=10ms, support=6, radius=2)";
            case "direct-integration":
                return "direct-integration(contrast=0.2)";
            case "high-pass":
                return "high-pass(cutoff=5rad/s, contrast=0.2)";
            case "complementary":
                return "complementary(cutoff=5rad/s, low-cutoff=0.5rad/s, contrast=0.2, saturated=0.95, dark=0.05)";
            case "kalman-fusion":
                return "kalman-fusion(contrast=0.2, process-noise=0.05, event-noise=0.3, shot-gain=0.5, read-noise=2, saturated=0.98)";
            default:
                throw new IllegalArgumentException("unknown stage " + stage);
        }
    }

    /**
     * Builds the stage named {@code stage} for a sensor of the given size. A denoise stage is built
     * as the first stage of a chain ending in direct integration (a chain must end in a
     * reconstruction), and only the denoise stage is returned. A complementary filter gets one
     * {@link SyntheticScene#rampFrame ramp frame} at {@code frameUs}, so both of its pixel classes occur.
     */
    static EventStage build(String stage, int width, int height, long frameUs) {
        String description = description(stage);
        boolean reconstructs = stage.equals("direct-integration") || stage.equals("high-pass")
                || stage.equals("complementary") || stage.equals("kalman-fusion");
        Chain chain = Chain.build(reconstructs ? description : description + " | direct-integration", width, height);
        EventStage built = chain.stages().get(0);
        if (built instanceof dev.afterglow.filters.recon.FrameFusion fusion) {
            fusion.applyFrame(frameUs, SyntheticScene.rampFrame(width, height), 8);
        }
        return built;
    }
}
