package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.quality.ReferenceFixtures.Fixture;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class SsimTest {

    @Test
    void shouldMatchScikitImageOnCommittedFixtures() {
        List<Fixture> fixtures = ReferenceFixtures.load();
        assertEquals(4, fixtures.size());
        for (Fixture f : fixtures) {
            // Reference: scikit-image 0.19.3 skimage.metrics.structural_similarity(a, b,
            // gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=R), the
            // settings of Wang, Bovik, Sheikh & Simoncelli (2004); see ssim_reference.py.
            double got = new Ssim(f.width(), f.height()).mean(f.a(), f.b(), f.dataRange());
            assertEquals(f.ssim(), got, 1e-12, f.name());
            // The float entry point reads the same values (they are exact floats).
            double fromFloats = new Ssim(f.width(), f.height())
                    .mean(ReferenceFixtures.toFloat(f.a()), ReferenceFixtures.toFloat(f.b()), f.dataRange());
            assertEquals(got, fromFloats, 0.0, f.name());
        }
    }

    @Test
    void shouldMatchNaiveWindowedDefinitionOnSeededImages() {
        // Naive reference: the Wang et al. (2004) formula with a full 11x11 Gaussian window summed
        // directly at every pixel whose window fits.
        SplittableRandom random = new SplittableRandom(42);
        int w = 29;
        int h = 17;
        double[] a = new double[w * h];
        double[] b = new double[w * h];
        for (int i = 0; i < a.length; i++) {
            a[i] = random.nextDouble() * 3 - 1;
            b[i] = 0.6 * a[i] + 0.4 * random.nextDouble();
        }
        double fast = new Ssim(w, h).mean(a, b, 4.0);
        assertEquals(naive(a, b, w, h, 4.0), fast, 1e-12);
    }

    @Test
    void shouldGiveOneForIdenticalImagesAndBeSymmetric() {
        // Wang et al. (2004): SSIM(x, x) = 1 and SSIM(x, y) = SSIM(y, x).
        SplittableRandom random = new SplittableRandom(3);
        int w = 20;
        int h = 14;
        double[] a = new double[w * h];
        double[] b = new double[w * h];
        for (int i = 0; i < a.length; i++) {
            a[i] = random.nextDouble();
            b[i] = random.nextDouble();
        }
        Ssim ssim = new Ssim(w, h);
        assertEquals(1.0, ssim.mean(a, a, 1.0), 1e-12);
        assertEquals(ssim.mean(a, b, 1.0), ssim.mean(b, a, 1.0), 1e-15);
        assertFalse(ssim.mean(a, b, 1.0) > 0.5);
    }

    @Test
    void shouldRefuseImagesSmallerThanOneWindow() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> new Ssim(10, 20));
        assertTrue(e.getMessage().contains("11x11"), e.getMessage());
    }

    @Test
    void shouldAverageTheMapOverTheMaskedPixelsOnly() {
        // The masked mean is the naive per-pixel SSIM map averaged over the masked pixels away from
        // the border; the whole-image mean of the same call is unchanged by the mask.
        SplittableRandom random = new SplittableRandom(9);
        int w = 31;
        int h = 19;
        double[] a = new double[w * h];
        double[] b = new double[w * h];
        float[] af = new float[w * h];
        float[] bf = new float[w * h];
        byte[] mask = new byte[w * h];
        for (int i = 0; i < a.length; i++) {
            af[i] = (float) random.nextDouble();
            bf[i] = (float) (0.7 * af[i] + 0.3 * random.nextDouble());
            a[i] = af[i];
            b[i] = bf[i];
            mask[i] = (byte) (i % w > 12 && i / w > 3 && random.nextInt(3) > 0 ? 1 : 0);
        }
        Ssim ssim = new Ssim(w, h);
        double whole = ssim.mean(af, bf, 1.0, mask);
        assertEquals(naive(a, b, w, h, 1.0), whole, 1e-12);
        assertEquals(naive(a, b, w, h, 1.0, mask), ssim.lastMaskedMean(), 1e-12);
        Ssim empty = new Ssim(w, h);
        empty.mean(af, bf, 1.0, new byte[w * h]);
        assertTrue(Double.isNaN(empty.lastMaskedMean()), "an empty mask has no mean");
    }

    private static double naive(double[] a, double[] b, int w, int h, double range) {
        return naive(a, b, w, h, range, null);
    }

    private static double naive(double[] a, double[] b, int w, int h, double range, byte[] mask) {
        int r = 5;
        double[][] win = new double[2 * r + 1][2 * r + 1];
        double sum = 0;
        for (int dy = -r; dy <= r; dy++) {
            for (int dx = -r; dx <= r; dx++) {
                win[dy + r][dx + r] = Math.exp(-(dx * dx + dy * dy) / (2 * 1.5 * 1.5));
                sum += win[dy + r][dx + r];
            }
        }
        double c1 = Math.pow(0.01 * range, 2);
        double c2 = Math.pow(0.03 * range, 2);
        double total = 0;
        int count = 0;
        for (int y = r; y < h - r; y++) {
            for (int x = r; x < w - r; x++) {
                double mx = 0;
                double my = 0;
                for (int dy = -r; dy <= r; dy++) {
                    for (int dx = -r; dx <= r; dx++) {
                        double g = win[dy + r][dx + r] / sum;
                        mx += g * a[(y + dy) * w + x + dx];
                        my += g * b[(y + dy) * w + x + dx];
                    }
                }
                double vx = 0;
                double vy = 0;
                double cxy = 0;
                for (int dy = -r; dy <= r; dy++) {
                    for (int dx = -r; dx <= r; dx++) {
                        double g = win[dy + r][dx + r] / sum;
                        double da = a[(y + dy) * w + x + dx] - mx;
                        double db = b[(y + dy) * w + x + dx] - my;
                        vx += g * da * da;
                        vy += g * db * db;
                        cxy += g * da * db;
                    }
                }
                if (mask == null || mask[y * w + x] != 0) {
                    total += (2 * mx * my + c1) * (2 * cxy + c2) / ((mx * mx + my * my + c1) * (vx + vy + c2));
                    count++;
                }
            }
        }
        return total / count;
    }
}
