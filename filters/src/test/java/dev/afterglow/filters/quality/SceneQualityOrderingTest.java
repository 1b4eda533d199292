package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.quality.QualityRun.MethodResult;
import dev.afterglow.filters.synth.EventLabel;
import dev.afterglow.filters.synth.SceneKind;
import java.util.EnumMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * The ordering the field reports for these methods (common practice; Scheerlinck, Barnes & Mahony,
 * ACCV 2018 show it on their sequences): direct integration drifts worst under noise, the
 * high-pass filter bounds the noise but loses the static background, complementary fusion
 * recovers both. Measured here on real runs of our own scenes, scaled to 160x120, over 8 s of
 * sensor time with the default sensor (1 Hz background activity per pixel, 5 hot pixels, 3%
 * threshold mismatch) and the standard methods of {@link QualityRun#standardMethods}; SSIM is the
 * mean over the evaluations (5 Hz) after the first second.
 */
class SceneQualityOrderingTest {
    private static final int WIDTH = 160;
    private static final int HEIGHT = 120;
    private static final long DURATION_US = 8_000_000;
    private static final Map<SceneKind, List<MethodResult>> RUNS = new EnumMap<>(SceneKind.class);

    // Indices into QualityRun.standardMethods.
    private static final int DIRECT = 0;
    private static final int HIGH_PASS = 2;
    private static final int COMPLEMENTARY = 4;
    private static final int DENOISED = 1;

    private static synchronized List<MethodResult> run(SceneKind kind) {
        return RUNS.computeIfAbsent(kind, k -> new QualityRun(new QualityRun.Settings(
                k.create(WIDTH, HEIGHT, 7), k.sensor(WIDTH, HEIGHT).seed(7).build(),
                DURATION_US, 200_000, 1_000_000, new long[0], QualityRun.standardMethods(0.2)))
                .run(new QualityRun.Observer() { }).methods());
    }

    private static double ssim(SceneKind kind, int method) {
        return run(kind).get(method).meanSsim();
    }

    private static String table(SceneKind kind) {
        StringBuilder b = new StringBuilder(kind.label()).append(':');
        for (MethodResult r : run(kind)) {
            b.append(String.format(Locale.ROOT, " %s=%.4f", r.label(), r.meanSsim()));
        }
        return b.toString();
    }

    @ParameterizedTest
    // The three scenes these orderings were established on; the failure-mode scenes are assessed elsewhere.
    @EnumSource(value = SceneKind.class, names = {"PARCEL_LINE", "DOCK_DOOR", "ORCHARD_PAN"})
    void directIntegrationShouldScoreWorst(SceneKind kind) {
        for (int variant : new int[] {0, DENOISED}) {
            double direct = ssim(kind, DIRECT + variant);
            assertTrue(direct < ssim(kind, HIGH_PASS + variant), table(kind));
            assertTrue(direct < ssim(kind, COMPLEMENTARY + variant), table(kind));
        }
    }

    @ParameterizedTest
    // The three scenes these orderings were established on; the failure-mode scenes are assessed elsewhere.
    @EnumSource(value = SceneKind.class, names = {"PARCEL_LINE", "DOCK_DOOR", "ORCHARD_PAN"})
    void highPassShouldBeatDirectIntegrationUnderNoise(SceneKind kind) {
        assertTrue(ssim(kind, HIGH_PASS) > ssim(kind, DIRECT), table(kind));
    }

    @Test
    void complementaryShouldScoreBestOnTheMostlyStaticScene() {
        SceneKind kind = SceneKind.ORCHARD_PAN;
        for (int variant : new int[] {0, DENOISED}) {
            double fusion = ssim(kind, COMPLEMENTARY + variant);
            assertTrue(fusion > ssim(kind, HIGH_PASS + variant), table(kind));
            assertTrue(fusion > ssim(kind, DIRECT + variant), table(kind));
        }
    }

    @ParameterizedTest
    @EnumSource(value = SceneKind.class, names = {"PARCEL_LINE", "DOCK_DOOR"})
    void denoiseShouldKeepSsimRemoveNoiseAndKeepSignal(SceneKind kind) {
        checkDenoise(kind);
    }

    // The slow pan's 90/90 denoise check became an ROC comparison per scene: see DenoiseRocSceneTest.

    private static void checkDenoise(SceneKind kind) {
        List<MethodResult> r = run(kind);
        for (int method : new int[] {DIRECT, HIGH_PASS, COMPLEMENTARY}) {
            MethodResult plain = r.get(method);
            MethodResult denoised = r.get(method + DENOISED);
            assertTrue(denoised.meanSsim() >= plain.meanSsim(), table(kind));
            double removed = 1 - denoised.keptFraction(EventLabel.BACKGROUND);
            double kept = denoised.keptFraction(EventLabel.SIGNAL);
            assertTrue(removed >= 0.9, kind + ": background activity removed " + removed);
            assertTrue(kept >= 0.9, kind + ": signal kept " + kept);
        }
    }
}
