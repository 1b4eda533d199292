package dev.afterglow.filters.readout;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link ToneMapper}: the fixed range maps linearly to 0..255 and clips; percentile mode
 * finds the same range as a sort-based percentile; flat and NaN images are handled; the GAMMA curve
 * follows its formula.
 *
 * <p>Percentiles are compared with the nearest-rank definition (the P-th percentile of N sorted
 * values is the value of rank ceil(P/100 * N), the smallest value with at least P% of the data at
 * or below it; textbook definition, from memory), to within one histogram bin width, which is
 * what the mapper documents. Grey levels must be within one level of the formula.
 */
class ToneMapperTest {

    private static int grey(byte b) {
        return b & 0xFF;
    }

    /** Nearest-rank percentile of already sorted values. */
    static double nearestRank(double[] sorted, double percent) {
        int rank = (int) Math.ceil(percent / 100.0 * sorted.length);
        return sorted[Math.max(0, Math.min(sorted.length, rank) - 1)];
    }

    /** Linear map of the log range [lo, hi] to 0..255 with clipping (the LOG curve). */
    static double linearGrey(double v, double lo, double hi) {
        double u = Math.max(0, Math.min(1, (v - lo) / (hi - lo)));
        return 255 * u;
    }

    /**
     * GAMMA curve: linear intensity exp(L) over the range, normalised, then display gamma 2.2
     * (common practice for sRGB-like screens): 255 * ((exp(r u) - 1) / (exp(r) - 1))^(1/2.2).
     */
    static double gammaGrey(double v, double lo, double hi) {
        double r = hi - lo;
        double u = Math.max(0, Math.min(1, (v - lo) / r));
        return 255 * Math.pow(Math.expm1(r * u) / Math.expm1(r), 1 / 2.2);
    }

    private static void assertWithinOneLevel(double want, int got, String what) {
        if (Math.abs(Math.round(want) - got) > 1) {
            fail(what + ": grey " + got + ", formula " + want);
        }
    }

    @Test
    void shouldMapTheFixedRangeLinearlyAndClip() {
        double lo = -3.2;
        double hi = 1.7;
        ToneMapper m = new ToneMapper(ToneMap.fixed(lo, hi));
        SplittableRandom rnd = new SplittableRandom(1);
        int n = 20_000;
        float[] log = new float[n];
        for (int i = 0; i < n; i++) {
            log[i] = (float) (lo - 1 + rnd.nextDouble() * (hi - lo + 2));
        }
        log[0] = (float) lo;
        log[1] = (float) hi;
        log[2] = -1e30f;
        log[3] = 1e30f;
        byte[] out = new byte[n];
        m.apply(log, n, out);
        assertEquals(0, grey(out[0]), "lo maps to 0");
        assertEquals(255, grey(out[1]), "hi maps to 255");
        assertEquals(0, grey(out[2]), "below lo clips to 0");
        assertEquals(255, grey(out[3]), "above hi clips to 255");
        int inside = 0;
        for (int i = 0; i < n; i++) {
            if (log[i] < lo) {
                assertEquals(0, grey(out[i]), "below lo: " + log[i]);
            } else if (log[i] > hi) {
                assertEquals(255, grey(out[i]), "above hi: " + log[i]);
            } else {
                inside++;
                assertWithinOneLevel(linearGrey(log[i], lo, hi), grey(out[i]), "value " + log[i]);
            }
        }
        assertTrue(inside > n / 2);
        assertEquals(lo, m.lastLow());
        assertEquals(hi, m.lastHigh());
    }

    @ParameterizedTest(name = "{0} pixels, {1}, percentiles {2}..{3}")
    @CsvSource({
        "3072, NORMAL, 1, 99",
        "3072, NORMAL, 5, 95",
        "76800, NORMAL, 1, 99",
        "3072, UNIFORM, 0, 100",
        "3072, OUTLIERS, 1, 99",
        "76800, OUTLIERS, 0.5, 99.5",
        "3072, LEVELS, 10, 90",
        "1000, SKEWED, 25, 75",
        "17, NORMAL, 1, 99",
    })
    void shouldFindTheSortBasedPercentilesToOneBin(int n, String shape, double low, double high) {
        SplittableRandom rnd = new SplittableRandom(n * 31L + shape.hashCode());
        float[] log = new float[n];
        for (int i = 0; i < n; i++) {
            log[i] = (float) sample(shape, rnd);
        }
        checkPercentiles(log, n, low, high);
    }

    static double sample(String shape, SplittableRandom rnd) {
        switch (shape) {
            case "NORMAL":
                return -2 + 0.7 * gaussian(rnd);
            case "UNIFORM":
                return -5 + 5 * rnd.nextDouble();
            case "OUTLIERS":
                // 2% hot or dead pixels far outside the scene's range.
                return rnd.nextInt(50) == 0 ? (rnd.nextBoolean() ? 40 : -60) : -1 + 0.3 * gaussian(rnd);
            case "LEVELS":
                return rnd.nextInt(5) * 0.25;
            case "SKEWED":
                return Math.exp(2 * rnd.nextDouble()) - 4;
            default:
                throw new IllegalArgumentException(shape);
        }
    }

    private static double gaussian(SplittableRandom rnd) {
        // Box-Muller.
        return Math.sqrt(-2 * Math.log(1 - rnd.nextDouble())) * Math.cos(2 * Math.PI * rnd.nextDouble());
    }

    /** Checks the percentile range and the mapping against a sort of the finite values. */
    static void checkPercentiles(float[] log, int n, double low, double high) {
        ToneMapper m = new ToneMapper(ToneMap.percentile(low, high));
        byte[] out = new byte[n];
        m.apply(log, n, out);
        double[] finite = new double[n];
        int count = 0;
        for (int i = 0; i < n; i++) {
            if (!Float.isNaN(log[i])) {
                finite[count++] = log[i];
            }
        }
        double[] sorted = Arrays.copyOf(finite, count);
        Arrays.sort(sorted);
        double min = sorted[0];
        double max = sorted[count - 1];
        double bin = (max - min) / (ToneMapper.BINS - 1) + 1e-6 * Math.max(1, Math.abs(max) + Math.abs(min));
        int stride = ToneMapper.sampleStride(n);
        if (stride == 1) {
            double wantLow = nearestRank(sorted, low);
            double wantHigh = nearestRank(sorted, high);
            assertEquals(wantLow, m.lastLow(), bin, "low percentile " + low);
            assertEquals(wantHigh, m.lastHigh(), bin, "high percentile " + high);
        } else {
            // Large images: percentiles of a regular subsample of about n / stride pixels. The
            // sample p-quantile lies within 3 standard deviations sqrt(p(1-p)/m) of rank p in the
            // full data (binomial count of sample points below a value; textbook order statistics).
            int samples = (n + stride - 1) / stride;
            assertWithinSampledRank(sorted, low, samples, bin, m.lastLow(), "low percentile " + low);
            assertWithinSampledRank(sorted, high, samples, bin, m.lastHigh(), "high percentile " + high);
        }
        for (int i = 0; i < n; i++) {
            if (Float.isNaN(log[i])) {
                assertEquals(0, grey(out[i]), "NaN maps to 0");
            } else {
                assertWithinOneLevel(linearGrey(log[i], m.lastLow(), m.lastHigh()), grey(out[i]), "value " + log[i]);
            }
        }
    }

    private static void assertWithinSampledRank(double[] sorted, double percent, int samples, double bin, double got, String what) {
        double p = percent / 100;
        double sigma = Math.max(Math.sqrt(p * (1 - p) / samples), 1.0 / samples);
        double lo = nearestRank(sorted, 100 * Math.max(0, p - 3 * sigma)) - bin;
        double hi = nearestRank(sorted, 100 * Math.min(1, p + 3 * sigma)) + bin;
        assertTrue(got >= lo && got <= hi, what + ": " + got + " outside [" + lo + ", " + hi + "]");
    }

    @Test
    void shouldIgnoreNanPixelsWhenFindingPercentiles() {
        SplittableRandom rnd = new SplittableRandom(5);
        int n = 5000;
        float[] log = new float[n];
        for (int i = 0; i < n; i++) {
            log[i] = rnd.nextInt(20) == 0 ? Float.NaN : (float) sample("NORMAL", rnd);
        }
        log[0] = Float.NaN; // also as the very first pixel
        checkPercentiles(log, n, 1, 99);
    }

    @Test
    void shouldMapFlatEmptyAndAllNanImagesWithoutFailing() {
        ToneMapper m = new ToneMapper(ToneMap.DEFAULT);
        float[] flat = new float[100];
        Arrays.fill(flat, -1.25f);
        byte[] out = new byte[100];
        m.apply(flat, 100, out);
        for (byte b : out) {
            assertEquals(out[0], b, "a flat image maps to one grey level");
        }
        assertTrue(m.lastLow() <= -1.25 && -1.25 <= m.lastHigh() && m.lastLow() < m.lastHigh());

        float[] nan = new float[50];
        Arrays.fill(nan, Float.NaN);
        Arrays.fill(out, (byte) 7);
        m.apply(nan, 50, out);
        for (int i = 0; i < 50; i++) {
            assertEquals(0, grey(out[i]), "NaN maps to 0");
        }
        m.apply(new float[0], 0, new byte[0]);
        assertTrue(m.lastLow() < m.lastHigh());
    }

    @ParameterizedTest(name = "log range {1}")
    @CsvSource({"-4, 0.5", "-4, 2", "-1, 5", "-8, 10", "0, 0.05"})
    void shouldFollowTheGammaFormula(double lo, double range) {
        double hi = lo + range;
        ToneMapper m = new ToneMapper(new ToneMap(ToneMap.Mode.FIXED, lo, hi, ToneMap.Curve.GAMMA));
        int n = 40_000;
        float[] log = new float[n];
        SplittableRandom rnd = new SplittableRandom(9);
        for (int i = 0; i < n; i++) {
            double u = rnd.nextDouble();
            // Half the samples crowd near black, where the curve is steepest.
            log[i] = (float) (i % 2 == 0 ? lo + range * u * u * u * u : lo - 0.2 * range + 1.4 * range * u);
        }
        byte[] out = new byte[n];
        m.apply(log, n, out);
        for (int i = 0; i < n; i++) {
            assertWithinOneLevel(gammaGrey(log[i], lo, hi), grey(out[i]), "log " + log[i] + " in [" + lo + ", " + hi + "]");
        }
        // And in percentile mode, against the range the mapper chose.
        ToneMapper p = new ToneMapper(new ToneMap(ToneMap.Mode.PERCENTILE, 2, 98, ToneMap.Curve.GAMMA));
        p.apply(log, n, out);
        for (int i = 0; i < n; i++) {
            assertWithinOneLevel(gammaGrey(log[i], p.lastLow(), p.lastHigh()), grey(out[i]), "percentile mode, log " + log[i]);
        }
    }
}
