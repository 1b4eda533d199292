package dev.afterglow.filters.denoise;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Pass probability of {@link BackgroundActivityFilter} for uniform, independent Poisson noise.
 *
 * <p>Every pixel of a 64x64 sensor fires as a Poisson process of rate r (exponential inter-arrival
 * times from a seeded generator, rounded to microseconds, merged in time order). A neighbour fired
 * within dT before an event with probability q = 1 - exp(-r·dT), independently for the 8 neighbours,
 * so the support is Binomial(8, q) and an event passes k-of-8 with P(Binomial(8, q) >= k); for k = 1
 * that is 1 - (1-q)^8 = 1 - exp(-8·r·dT).
 *
 * <p>So that the passed count is exactly binomial, the pass fraction is measured on events whose
 * pass decisions are independent: at interior pixels on a lattice of spacing 3 (their 3x3
 * neighbourhoods are disjoint), after the first dT, and at each such pixel only on an event more
 * than dT after the previous measured one (disjoint look-back windows; events in between still
 * reach the filter). These choices depend only on the measured pixel's own process, which is
 * independent of its neighbours', so they do not bias the pass probability; and a measured event
 * may follow an unmeasured one of its own pixel within dT, so a filter that wrongly counts the
 * pixel itself as support is caught. Counting all interior events would correlate neighbouring
 * decisions and widen the spread beyond the binomial bound.
 */
class BackgroundActivityPoissonTest {
    private static final int WIDTH = 64;
    private static final int HEIGHT = 64;
    private static final int WINDOW_US = 10_000;
    private static final long START_US = 5_000_000;
    /** Measured events wanted per run. */
    private static final int TARGET_MEASURED = 60_000;
    /** Two-sided 99% quantile of the standard normal distribution (any statistics table). */
    private static final double Z99 = 2.576;

    private record Tally(long measured, long passed) {
    }

    @ParameterizedTest(name = "8·r·dT={0}")
    @ValueSource(doubles = {0.1, 0.5, 1.5})
    void shouldPassNoiseWithProbabilityThatAnyNeighbourFired(double meanSupport) {
        double rate = meanSupport / (8 * WINDOW_US * 1e-6);
        Tally tally = run(rate, 1, 0x5EED_0001L + (long) (meanSupport * 10));
        // Poisson process (any probability text): P(no event of rate 8r in a window dT) =
        // exp(-8·r·dT), so an event finds at least one neighbour with probability 1 - exp(-8·r·dT).
        // Allowance for microsecond rounding: the window is effectively dT or dT + 1 us.
        double pLow = 1 - Math.exp(-8 * rate * WINDOW_US * 1e-6);
        double pHigh = 1 - Math.exp(-8 * rate * (WINDOW_US + 1) * 1e-6);
        assertWithinBinomialBound(tally, pLow, pHigh);
    }

    @ParameterizedTest(name = "k={0}, 8·r·dT={1}")
    @CsvSource({"2, 1.5", "3, 1.5", "2, 3.0", "3, 3.0"})
    void shouldPassNoiseWithBinomialProbabilityForKOfEight(int support, double meanSupport) {
        double rate = meanSupport / (8 * WINDOW_US * 1e-6);
        Tally tally = run(rate, support, 0x5EED_0100L + support * 31L + (long) (meanSupport * 10));
        // Each neighbour is an independent Poisson process: it fired within dT with probability
        // q = 1 - exp(-r·dT) (any probability text), so the support is Binomial(8, q).
        double pLow = binomialTail(8, 1 - Math.exp(-rate * WINDOW_US * 1e-6), support);
        double pHigh = binomialTail(8, 1 - Math.exp(-rate * (WINDOW_US + 1) * 1e-6), support);
        assertWithinBinomialBound(tally, pLow, pHigh);
    }

    /**
     * 99% bound for a Binomial(n, p) count, normal approximation:
     * |k - n·p| <= 2.576·sqrt(n·p·(1-p)) (any statistics text); p may lie anywhere in [pLow, pHigh].
     */
    private static void assertWithinBinomialBound(Tally tally, double pLow, double pHigh) {
        long n = tally.measured();
        long k = tally.passed();
        double low = n * pLow - Z99 * Math.sqrt(n * pLow * (1 - pLow));
        double high = n * pHigh + Z99 * Math.sqrt(n * pHigh * (1 - pHigh));
        assertTrue(n >= TARGET_MEASURED / 2, "measured only " + n + " events");
        assertTrue(k >= low && k <= high, "passed " + k + " of " + n + " (fraction " + (double) k / n
                + "), expected " + pLow + " .. " + pHigh + ", 99% bound [" + low + ", " + high + "]");
    }

    /** P(Binomial(n, q) >= k). */
    private static double binomialTail(int n, double q, int k) {
        double below = 0;
        double choose = 1;
        for (int j = 0; j < k; j++) {
            below += choose * Math.pow(q, j) * Math.pow(1 - q, n - j);
            choose = choose * (n - j) / (j + 1);
        }
        return 1 - below;
    }

    private static boolean measuredPixel(int x, int y) {
        return x % 3 == 1 && y % 3 == 1 && x <= WIDTH - 2 && y <= HEIGHT - 2;
    }

    /** Runs uniform Poisson noise of {@code rate} per pixel through the filter and tallies measured events. */
    private static Tally run(double rate, int support, long seed) {
        int lattice = 0;
        for (int y = 0; y < HEIGHT; y++) {
            for (int x = 0; x < WIDTH; x++) {
                lattice += measuredPixel(x, y) ? 1 : 0;
            }
        }
        // Measured events per pixel and second, r / (1 + r·dT) (non-paralysable dead time dT, from
        // memory); it only sizes the run.
        double measuredRate = rate / (1 + rate * WINDOW_US * 1e-6);
        long durationUs = WINDOW_US + (long) (TARGET_MEASURED / (lattice * measuredRate) * 1e6);
        long[] keys = noise(rate, durationUs, new SplittableRandom(seed));

        BackgroundActivityFilter filter = new BackgroundActivityFilter(WIDTH, HEIGHT, WINDOW_US, support);
        EventBatch batch = new EventBatch(4096);
        long[] lastMeasured = new long[WIDTH * HEIGHT];
        Arrays.fill(lastMeasured, Long.MIN_VALUE / 2);
        boolean[] counted = new boolean[batch.capacity()];
        long measured = 0;
        long passed = 0;
        for (int from = 0; from < keys.length; from += batch.capacity()) {
            int to = Math.min(keys.length, from + batch.capacity());
            batch.reset(keys[from] >>> 12);
            for (int i = from; i < to; i++) {
                long t = keys[i] >>> 12;
                int pixel = (int) (keys[i] & 0xFFF);
                int x = pixel % WIDTH;
                int y = pixel / WIDTH;
                boolean measure = measuredPixel(x, y) && t >= START_US + WINDOW_US
                        && t - lastMeasured[pixel] > WINDOW_US;
                if (measure) {
                    lastMeasured[pixel] = t;
                }
                counted[i - from] = measure;
                batch.add(x, y, t, 1);
            }
            for (int i = 0; i < to - from; i++) {
                measured += counted[i] ? 1 : 0;
            }
            int before = batch.size;
            // The filter keeps passed events in order: match them back to the input as a subsequence.
            long[] input = Arrays.copyOfRange(keys, from, to);
            filter.process(batch);
            assertTrue(batch.size <= before, "filter added events");
            int j = 0;
            for (int i = 0; i < batch.size; i++) {
                long key = (batch.timeUs(i) << 12) | (batch.y[i] * WIDTH + batch.x[i]);
                while (input[j] != key) {
                    j++;
                }
                passed += counted[j] ? 1 : 0;
                j++;
            }
        }
        return new Tally(measured, passed);
    }

    /** Independent Poisson processes of {@code rate} per pixel, as sorted keys (time_us << 12 | pixel). */
    private static long[] noise(double rate, long durationUs, SplittableRandom rng) {
        double meanGapUs = 1e6 / rate;
        long[] keys = new long[(int) (WIDTH * HEIGHT * rate * durationUs * 1e-6 * 1.05) + 1024];
        int n = 0;
        for (int pixel = 0; pixel < WIDTH * HEIGHT; pixel++) {
            double t = START_US - meanGapUs * Math.log(1 - rng.nextDouble());
            while (t < START_US + durationUs) {
                if (n == keys.length) {
                    keys = Arrays.copyOf(keys, n * 2);
                }
                keys[n++] = (Math.round(t) << 12) | pixel; // 64x64 pixels fit 12 bits
                t -= meanGapUs * Math.log(1 - rng.nextDouble());
            }
        }
        keys = Arrays.copyOf(keys, n);
        Arrays.sort(keys);
        return keys;
    }
}
