package dev.afterglow.filters.chain;

/**
 * The chains a sensor gets when its configuration does not name one: one for sensors that send
 * their own frames, one for events-only sensors. Both were chosen by the quality benchmark on its
 * tuning seeds ({@code dev.afterglow.filters.quality.BenchmarkSeeds#TUNING}); the README's
 * validation table shows what they reach on seeds no choice looked at.
 */
public final class DefaultChains {
    /** For a sensor whose hello says it sends frames. */
    public static final String WITH_FRAMES =
            "refractory(period=100us) | patch-support(window=16ms) | kalman-fusion(contrast=0.2)";
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
