package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.chain.DefaultChains;
import dev.afterglow.filters.synth.SceneKind;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * The operating point of the default fusion chain's denoiser ({@link DefaultChains#FRAMES_DENOISE}:
 * patch support with a window that shrinks with the mean event rate) on every fast scene, at the
 * README tables' 320x240 under each scene's own sensor conditions, pooled over the
 * {@link BenchmarkSeeds#VALIDATION} seeds: it must keep 90% of the signal while removing 90% of
 * the background activity (the fusion issue's target; its ROC family, patch support over the
 * window, is checked against the background-activity filter's in {@link DenoiseRocSceneTest}).
 * At 160x120 the same setting removes only 88.6% on {@code parcel-line_dark}: the figure holds at
 * the size the defaults were chosen for, so it is checked there, over 1.5 s per seed.
 */
class FusionDenoiserOperatingPointTest {
    @ParameterizedTest
    @EnumSource(SceneKind.class)
    void shouldKeep90PercentOfSignalAndRemove90PercentOfNoiseOnFastScenes(SceneKind kind) {
        Assumptions.assumeFalse(kind.slow(), "a slow pan: no filter reaches 90/90 there (README, Denoiser ROC)");
        DenoiseRoc roc = new DenoiseRoc(List.of(DenoiseRoc.Family.ofChain("fusion chain's denoiser", "none",
                List.of("default"), v -> DefaultChains.FRAMES_DENOISE)));
        for (long seed : BenchmarkSeeds.VALIDATION) {
            roc.run(kind.create(320, 240, seed), kind.sensor(320, 240).seed(seed).build(), 1_500_000);
        }
        DenoiseRoc.Point p = roc.results().get(0).points().get(0);
        String row = String.format(Locale.ROOT, "%s: %s keeps %.3f of the signal, removes %.3f of the background activity",
                kind.label(), p.candidate().description(), p.keptSignal(), p.removedBackground());
        System.out.println(row);
        assertTrue(p.keptSignal() >= 0.9, row);
        assertTrue(p.removedBackground() >= 0.9, row);
    }
}
