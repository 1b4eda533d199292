package dev.afterglow.filters.synth;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class TrainingMixSceneTest {

    @Test
    void everyChangeLiesInsideTheReportedRegionsWhateverTheSeed() {
        int moving = 0;
        for (long seed = 1; seed <= 30; seed++) {
            Scene scene = new TrainingMixScene(64, 48, seed);
            if (ScenesTest.changesOutsideRegions(scene, new SplittableRandom(seed), 8_000_000) > 0) {
                moving++;
            }
        }
        assertTrue(moving >= 25, "nearly every random scene moves: " + moving + " of 30");
    }

    @Test
    void aSeedReproducesItsSceneAndSeedsDiffer() {
        float[] a = new float[64 * 48];
        float[] b = new float[64 * 48];
        float[] c = new float[64 * 48];
        new TrainingMixScene(64, 48, 5).render(1_234_567, a);
        new TrainingMixScene(64, 48, 5).render(1_234_567, b);
        new TrainingMixScene(64, 48, 6).render(1_234_567, c);
        assertArrayEquals(a, b);
        assertFalse(Arrays.equals(a, c));
        for (float v : a) {
            assertTrue(Float.isFinite(v));
        }
    }

    @Test
    void scenesSpanTheRangeOfContentTheNetworkMustLearn() {
        // Over many seeds: some nearly static, some with fast objects, some with a high dynamic range.
        int slow = 0;
        int fast = 0;
        int wide = 0;
        float[] img = new float[96 * 72];
        for (long seed = 1; seed <= 60; seed++) {
            TrainingMixScene s = new TrainingMixScene(96, 72, seed);
            slow += s.maxSpeedPxPerS() < 96 ? 1 : 0;
            fast += s.maxSpeedPxPerS() > 2 * 96 ? 1 : 0;
            s.render(500_000, img);
            float lo = Float.MAX_VALUE;
            float hi = -Float.MAX_VALUE;
            for (float v : img) {
                lo = Math.min(lo, v);
                hi = Math.max(hi, v);
            }
            wide += hi - lo > Math.log(50) ? 1 : 0;
        }
        assertTrue(slow >= 3 && fast >= 10 && wide >= 10, "slow " + slow + ", fast " + fast + ", wide range " + wide);
        assertEquals(TrainingMixScene.NAME, new TrainingMixScene(32, 24, 1).name());
        assertThrows(IllegalArgumentException.class, () -> new TrainingMixScene(31, 24, 1));
    }

    @Test
    void theMixHoldsPansSpinsAndSwingsInTheirShares() {
        int pans = 0;
        int spins = 0;
        int swings = 0;
        int seeds = 400;
        for (long seed = 1; seed <= seeds; seed++) {
            TrainingMixScene scene = new TrainingMixScene(32, 24, seed);
            int kind = scene.motionKind();
            assertEquals(kind == 0, scene.camera() instanceof CameraPan);
            pans += kind == 0 ? 1 : 0;
            spins += kind == 1 ? 1 : 0;
            swings += kind == 2 ? 1 : 0;
        }
        assertShare(TrainingMixScene.PAN_SHARE, pans, seeds);
        assertShare(TrainingMixScene.SPIN_SHARE, spins, seeds);
        assertShare(1 - TrainingMixScene.PAN_SHARE - TrainingMixScene.SPIN_SHARE, swings, seeds);
    }

    /** A binomial count within 4.5 standard deviations, sqrt(n p (1 - p)), of n p (textbook). */
    private static void assertShare(double p, int count, int n) {
        assertEquals(n * p, count, 4.5 * Math.sqrt(n * p * (1 - p)), "share " + p);
    }
}
