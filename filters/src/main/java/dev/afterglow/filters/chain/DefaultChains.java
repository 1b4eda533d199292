package dev.afterglow.filters.chain;

/**
 * The chains a sensor gets when its configuration does not name one: one for sensors that send
 * their own frames, one for events-only sensors. Both were chosen by the quality benchmark on its
 * tuning seeds ({@code dev.afterglow.filters.quality.BenchmarkSeeds#TUNING}); the README's
 * validation table shows what they reach on seeds no choice looked at.
 */
public final class DefaultChains {
    /**
     * The denoise stage of {@link #WITH_FRAMES}: patch support with a window of at most 24 ms that
     * shrinks with the sensor's mean event rate (0.15 events per pixel per window).
     */
    public static final String FRAMES_DENOISE = "patch-support(window=24ms, fill=0.15)";
    /** For a sensor whose hello says it sends frames. */
    public static final String WITH_FRAMES =
            "refractory(period=100us) | " + FRAMES_DENOISE + " | kalman-fusion(contrast=0.2)";
    /** For an events-only sensor. */
    public static final String EVENTS_ONLY =
            "refractory(period=100us) | patch-support(window=16ms) | high-pass(cutoff=3rad/s, contrast=0.2)";

    private DefaultChains() {
    }

    /** The default chain for a sensor that does or does not send frames, parsed. */
    public static ChainSpec forSensor(boolean sendsFrames) {
        return ChainSpec.parse(sendsFrames ? WITH_FRAMES : EVENTS_ONLY);
    }
}
