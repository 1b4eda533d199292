package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class FrameNoiseModelTest {
    // Linear camera model (EMVA 1288, from memory): count variance g·μ + r² + 1/12 (shot, read,
    // quantisation); delta method for the log: Var ln(v + 1/2) ≈ Var v / (μ + 1/2)².

    @Test
    void shouldGiveTheLogOfAFractionalCountWithinTwoTenThousandthsOfMathLog() {
        FrameNoiseModel m = new FrameNoiseModel(0.5, 2, 0.98);
        for (int bits : new int[] {8, 10, 16}) {
            int max = (1 << bits) - 1;
            java.util.SplittableRandom random = new java.util.SplittableRandom(bits);
            for (int k = 0; k < 100_000; k++) {
                double c = k < 50_000 ? random.nextDouble() * 70 : random.nextDouble() * max;
                double want = Math.log((c + 0.5) / (max + 1));
                assertEquals(want, m.logOfCount(c, bits), 2e-4, bits + " bits, count " + c);
            }
            assertEquals(Math.log((max + 0.5) / (max + 1)), m.logOfCount(max, bits), 1e-12, "full scale");
        }
    }

    @Test
    void shouldGiveTheLinearCameraModelsVarianceOfEachValueInLogUnits() {
        FrameNoiseModel m = new FrameNoiseModel(0.5, 2, 0.98);
        for (int v : new int[] {0, 1, 5, 60, 200, 249}) {
            double expected = (0.5 * v + 4 + 1.0 / 12) / ((v + 0.5) * (v + 0.5));
            assertEquals(expected, m.variance(v, 8), 1e-12, "value " + v);
            assertEquals(Math.log((v + 0.5) / 256), m.log(v, 8), 1e-12);
        }
        assertEquals(FrameNoiseModel.SATURATED_VARIANCE, m.variance(250, 8));
        // 10 bits: four times the counts per 8-bit count.
        double g10 = 0.5 * 1023 / 255.0;
        double r10 = 2 * 1023 / 255.0;
        assertEquals((g10 * 400 + r10 * r10 + 1.0 / 12) / (400.5 * 400.5), m.variance(400, 10), 1e-12);
    }

    @Test
    void shouldGiveTheVarianceAtTheLevelAnEstimatePredicts() {
        FrameNoiseModel m = new FrameNoiseModel(0.5, 2, 0.98);
        for (double mu : new double[] {0.3, 1.3, 4, 30, 120, 240}) {
            double expected = (0.5 * mu + 4 + 1.0 / 12) / ((mu + 0.5) * (mu + 0.5));
            double got = m.varianceAtLog(Math.log((mu + 0.5) / 256), 8);
            assertEquals(expected, got, 0.01 * expected, "level " + mu + " (table of 2048 steps in log: within 1%)");
        }
        // Beyond the table: the ends.
        assertEquals(m.varianceAtLog(Math.log(0.5 / 256), 8), m.varianceAtLog(-50, 8));
        assertEquals(m.varianceAtLog(Math.log(249.5 / 256), 8), m.varianceAtLog(3, 8));
    }
}
