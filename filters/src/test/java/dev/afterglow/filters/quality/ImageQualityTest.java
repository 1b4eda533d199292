package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.quality.ReferenceFixtures.Fixture;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class ImageQualityTest {

    @Test
    void affineFitShouldMatchNumpyLeastSquares() {
        for (Fixture f : ReferenceFixtures.load()) {
            // Reference: numpy.linalg.lstsq on [recon, 1] against truth (ssim_reference.py).
            AffineFit fit = AffineFit.fit(f.b(), f.a(), f.a().length);
            assertEquals(f.fitScale(), fit.scale(), 1e-9 * Math.max(1, Math.abs(f.fitScale())), f.name());
            assertEquals(f.fitOffset(), fit.offset(), 1e-9 * Math.max(1, Math.abs(f.fitOffset())), f.name());
            AffineFit fromFloats = AffineFit.fit(ReferenceFixtures.toFloat(f.b()), ReferenceFixtures.toFloat(f.a()), f.a().length);
            assertEquals(fit.scale(), fromFloats.scale(), 1e-12 * Math.max(1, Math.abs(fit.scale())), f.name());
        }
    }

    @Test
    void shouldScoreLikeTheReferencePipeline() {
        for (Fixture f : ReferenceFixtures.load()) {
            // Reference: the same steps in numpy/scikit-image 0.19.3 (lstsq fit, truth min..max
            // mapped to [0, 1], structural_similarity and peak_signal_noise_ratio with data_range=1).
            // The Java side stores the mapped images as float, hence the tolerance.
            ImageQuality q = new ImageQuality(f.width(), f.height());
            FrameQuality r = q.evaluate(ReferenceFixtures.toFloat(f.a()), ReferenceFixtures.toFloat(f.b()));
            double[] p = f.pipeline();
            assertEquals(p[0], r.fit().scale(), 1e-9 * Math.max(1, Math.abs(p[0])), f.name());
            assertEquals(p[1], r.fit().offset(), 1e-9 * Math.max(1, Math.abs(p[1])), f.name());
            assertEquals(p[2], r.ssim(), 1e-6, f.name());
            assertEquals(p[3], r.psnrDb(), 1e-5, f.name());
            assertEquals(p[4], r.maeLog(), 1e-9, f.name());
        }
    }

    @Test
    void psnrShouldMatchScikitImageOnRawImages() {
        for (Fixture f : ReferenceFixtures.load()) {
            // Reference: skimage.metrics.peak_signal_noise_ratio(a, b, data_range=R), i.e.
            // 10·log10(R² / MSE).
            double mse = 0;
            for (int i = 0; i < f.a().length; i++) {
                mse += (f.a()[i] - f.b()[i]) * (f.a()[i] - f.b()[i]);
            }
            mse /= f.a().length;
            assertEquals(f.psnr(), 10 * Math.log10(f.dataRange() * f.dataRange() / mse), 1e-9, f.name());
        }
    }

    @Test
    void shouldForgiveGainAndOffsetButNotStructure() {
        SplittableRandom random = new SplittableRandom(11);
        int w = 40;
        int h = 30;
        float[] truth = new float[w * h];
        float[] scaled = new float[w * h];
        float[] shuffled = new float[w * h];
        for (int i = 0; i < truth.length; i++) {
            truth[i] = (float) (Math.sin(i % w / 4.0) + 0.3 * random.nextDouble());
            scaled[i] = 0.25f * truth[i] - 7f;
        }
        System.arraycopy(truth, 0, shuffled, 0, truth.length);
        for (int i = shuffled.length - 1; i > 0; i--) { // Fisher-Yates: same values, no structure
            int j = random.nextInt(i + 1);
            float tmp = shuffled[i];
            shuffled[i] = shuffled[j];
            shuffled[j] = tmp;
        }
        ImageQuality q = new ImageQuality(w, h);
        FrameQuality same = q.evaluate(truth, scaled);
        assertEquals(1.0, same.ssim(), 1e-6);
        assertTrue(same.psnrDb() > 100, "PSNR " + same.psnrDb());
        assertEquals(0.0, same.maeLog(), 1e-5);
        FrameQuality other = q.evaluate(truth, shuffled);
        assertTrue(other.ssim() < 0.3, "SSIM " + other.ssim());
    }
}
