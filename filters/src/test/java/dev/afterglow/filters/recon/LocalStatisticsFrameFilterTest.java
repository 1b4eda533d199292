package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class LocalStatisticsFrameFilterTest {

    /**
     * Naive reference of Lee's local-statistics filter (J.-S. Lee, IEEE TPAMI 2(2), 1980): window
     * mean and variance by direct summation in double precision, k = max(0, s² - σ²)/s², y = m +
     * k(c - m); windows clipped at the border; a window with a saturated pixel is left alone.
     */
    private static void reference(int[] c, int w, int h, int r, int saturatedAt, double gain, double read2,
            double[] y, double[] factor) {
        for (int py = 0; py < h; py++) {
            for (int px = 0; px < w; px++) {
                double s = 0;
                double sq = 0;
                int n = 0;
                boolean saturated = false;
                for (int dy = -r; dy <= r; dy++) {
                    for (int dx = -r; dx <= r; dx++) {
                        int x = px + dx;
                        int yy = py + dy;
                        if (x < 0 || yy < 0 || x >= w || yy >= h) {
                            continue;
                        }
                        int v = c[yy * w + x];
                        saturated |= v >= saturatedAt;
                        s += v;
                        sq += (double) v * v;
                        n++;
                    }
                }
                int i = py * w + px;
                if (saturated) {
                    y[i] = c[i];
                    factor[i] = 1;
                    continue;
                }
                double mean = s / n;
                double local = Math.max(0, sq / n - mean * mean);
                double noise = gain * mean + read2;
                double k = local > noise ? (local - noise) / local : 0;
                y[i] = mean + k * (c[i] - mean);
                factor[i] = Math.max(k, 1.0 / n);
            }
        }
    }

    @Test
    void shouldMatchTheNaiveReferenceOnSeededFrames() {
        SplittableRandom random = new SplittableRandom(42);
        int[][] sizes = {{37, 23}, {3, 2}, {5, 9}, {1, 6}, {8, 1}};
        for (int[] size : sizes) {
            for (int radius = 1; radius <= 3; radius++) {
                int w = size[0];
                int h = size[1];
                int[] counts = new int[w * h];
                for (int i = 0; i < counts.length; i++) {
                    // Texture in the left half, a flat noisy patch in the right, a few saturated pixels.
                    int x = i % w;
                    double base = x < w / 2 ? 40 + 30 * Math.sin(i * 0.7) : 20;
                    counts[i] = (int) Math.max(0, Math.min(255, base + 3 * random.nextGaussian()));
                    if (random.nextInt(200) == 0) {
                        counts[i] = 255;
                    }
                }
                LocalStatisticsFrameFilter f = new LocalStatisticsFrameFilter(w, h, radius);
                f.apply(counts, 250, 0.5, 4 + 1.0 / 12);
                double[] y = new double[w * h];
                double[] factor = new double[w * h];
                reference(counts, w, h, radius, 250, 0.5, 4 + 1.0 / 12, y, factor);
                for (int i = 0; i < y.length; i++) {
                    assertEquals(y[i], f.filtered()[i], 1e-9, w + "x" + h + " radius " + radius + " pixel " + i);
                    assertEquals(factor[i], f.varianceFactor()[i], 1e-6, "radius " + radius + " pixel " + i);
                }
            }
        }
    }

    @Test
    void shouldAverageNoiseAwayAndKeepAnEdge() {
        // A step from 10 to 200 counts under read noise of 2 counts: the flat sides come out close
        // to their true levels with much less than the raw noise, the step stays a step.
        int w = 64;
        int h = 64;
        SplittableRandom random = new SplittableRandom(7);
        int[] counts = new int[w * h];
        for (int i = 0; i < counts.length; i++) {
            int truth = i % w < w / 2 ? 10 : 200;
            counts[i] = (int) Math.round(truth + 2 * random.nextGaussian());
        }
        LocalStatisticsFrameFilter f = new LocalStatisticsFrameFilter(w, h, 2);
        f.apply(counts, 255, 0, 4 + 1.0 / 12);
        double rawError = 0;
        double filteredError = 0;
        int flat = 0;
        for (int y = 3; y < h - 3; y++) {
            for (int x = 3; x < w - 3; x++) {
                if (Math.abs(x - w / 2) < 4) {
                    continue;
                }
                int truth = x < w / 2 ? 10 : 200;
                int i = y * w + x;
                rawError += Math.pow(counts[i] - truth, 2);
                filteredError += Math.pow(f.filtered()[i] - truth, 2);
                flat++;
            }
        }
        assertTrue(filteredError < rawError / 5, "flat regions: mean square error " + filteredError / flat
                + " against the raw " + rawError / flat);
        for (int y = 0; y < h; y++) {
            assertEquals(10, f.filtered()[y * w + w / 2 - 1], 8, "left of the step, row " + y);
            assertEquals(200, f.filtered()[y * w + w / 2], 8, "right of the step, row " + y);
        }
    }
}
