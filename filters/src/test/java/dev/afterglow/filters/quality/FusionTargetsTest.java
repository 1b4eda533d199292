package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.DefaultChains;
import dev.afterglow.filters.synth.SceneKind;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * The fusion issue's targets on the validation seeds ({@link BenchmarkSeeds#VALIDATION}, never
 * used to choose anything), at 320x240 over 6 s of sensor time (the README table's settings)
 * with each scene's own sensor conditions; SSIM after the per-frame affine fit, mean over the evaluations (5 Hz) after the
 * first second, pooled over the seeds. The default chain for a sensor with frames
 * ({@link DefaultChains#WITH_FRAMES}) against what a user already has: holding the sensor's
 * latest frame, and the plain complementary filter with one fixed cut-off of 2π rad/s and no
 * denoise ({@link QualityRun#PLAIN_COMPLEMENTARY_CUTOFF}). The README's validation table has the
 * same figures.
 *
 * <p>One target is not reached, measured and kept visible here with the bound that does hold
 * (reported, not weakened elsewhere): {@code rink-shot} against holding the frame. The pucks cover
 * under 1% of the image, so the held frame already scores 0.975 and +0.05 is above SSIM's
 * ceiling; the default must not fall more than 0.01 below it (README table: 0.976 against 0.975).
 */
class FusionTargetsTest {
    private static final int WIDTH = 320;
    private static final int HEIGHT = 240;
    private static final long DURATION_US = 6_000_000;
    private static final Map<SceneKind, double[]> SSIM = new EnumMap<>(SceneKind.class);
    private static final int HOLD = 0;
    private static final int PLAIN = 1;
    private static final int DEFAULT = 2;

    private static synchronized double[] ssim(SceneKind kind) {
        return SSIM.computeIfAbsent(kind, k -> {
            List<QualityRun.Method> methods = new ArrayList<>();
            methods.add(new QualityRun.Method("hold-frame", ChainSpec.parse("hold-frame")));
            methods.add(new QualityRun.Method("plain-comp", ChainSpec.parse("complementary(cutoff="
                    + QualityRun.PLAIN_COMPLEMENTARY_CUTOFF + ", low-cutoff=" + QualityRun.PLAIN_COMPLEMENTARY_CUTOFF + ")")));
            methods.add(new QualityRun.Method("default", DefaultChains.forSensor(true)));
            QualityRun.Report pooled = null;
            for (long seed : BenchmarkSeeds.VALIDATION) {
                QualityRun.Report one = new QualityRun(new QualityRun.Settings(k.create(WIDTH, HEIGHT, seed),
                        k.sensor(WIDTH, HEIGHT).seed(seed).build(), DURATION_US, 200_000, 1_000_000, new long[0], methods))
                        .run(new QualityRun.Observer() { });
                pooled = pooled == null ? one : pooled.pool(one);
            }
            double[] s = new double[methods.size()];
            for (int m = 0; m < s.length; m++) {
                s[m] = pooled.methods().get(m).meanSsim();
            }
            return s;
        });
    }

    private static String row(SceneKind kind) {
        double[] s = ssim(kind);
        return String.format(Locale.ROOT, "%s: hold-frame %.4f, plain complementary %.4f, default %.4f", kind.label(),
                s[HOLD], s[PLAIN], s[DEFAULT]);
    }

    @ParameterizedTest
    @EnumSource(SceneKind.class)
    void defaultShouldBeatThePlainFixedCutoffComplementaryFilterByFivePoints(SceneKind kind) {
        double[] s = ssim(kind);
        assertTrue(s[DEFAULT] >= s[PLAIN] + 0.05, row(kind));
    }

    @ParameterizedTest
    @EnumSource(SceneKind.class)
    void defaultShouldBeatHoldingTheFrameOnMotionAndMatchItOnSlowScenes(SceneKind kind) {
        double[] s = ssim(kind);
        if (kind.slow() || kind == SceneKind.RINK_SHOT) { // rink-shot: the ceiling, see the class comment
            assertTrue(s[DEFAULT] >= s[HOLD] - 0.01, row(kind));
        } else {
            assertTrue(s[DEFAULT] >= s[HOLD] + 0.05, row(kind));
        }
    }
}
