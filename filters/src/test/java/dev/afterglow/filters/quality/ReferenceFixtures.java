package dev.afterglow.filters.quality;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;

/**
 * The committed output of {@code filters/src/test/python/ssim_reference.py}: small image pairs with
 * SSIM and PSNR from scikit-image 0.19.3 ({@code skimage.metrics.structural_similarity} with
 * {@code gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=R};
 * {@code skimage.metrics.peak_signal_noise_ratio} with {@code data_range=R}) and the least-squares
 * line from {@code numpy.linalg.lstsq}.
 */
final class ReferenceFixtures {
    /** One fixture; images row-major, values exactly representable as float. */
    record Fixture(String name, int width, int height, double dataRange, double[] a, double[] b, double ssim,
            double psnr, double fitScale, double fitOffset, double[] pipeline) {
    }

    private ReferenceFixtures() {
    }

    static List<Fixture> load() {
        List<Fixture> list = new ArrayList<>();
        try (InputStream in = ReferenceFixtures.class.getResourceAsStream("ssim-reference.txt")) {
            if (in == null) {
                throw new IllegalStateException("ssim-reference.txt missing from test resources");
            }
            BufferedReader r = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8));
            String line;
            String[] head = null;
            double[] a = null;
            double[] b = null;
            double ssim = 0;
            double psnr = 0;
            double[] fit = null;
            while ((line = r.readLine()) != null) {
                if (line.startsWith("#") || line.isBlank()) {
                    continue;
                }
                String[] f = line.trim().split(" ");
                switch (f[0]) {
                    case "fixture" -> head = f;
                    case "a" -> a = numbers(f);
                    case "b" -> b = numbers(f);
                    case "ssim" -> ssim = Double.parseDouble(f[1]);
                    case "psnr" -> psnr = Double.parseDouble(f[1]);
                    case "fit" -> fit = numbers(f);
                    case "pipeline" -> list.add(new Fixture(head[1], Integer.parseInt(head[2]), Integer.parseInt(head[3]),
                            Double.parseDouble(head[4]), a, b, ssim, psnr, fit[0], fit[1], numbers(f)));
                    default -> throw new IllegalStateException("unexpected line " + f[0]);
                }
            }
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return list;
    }

    private static double[] numbers(String[] f) {
        double[] v = new double[f.length - 1];
        for (int i = 1; i < f.length; i++) {
            v[i - 1] = Double.parseDouble(f[i]);
        }
        return v;
    }

    static float[] toFloat(double[] v) {
        float[] f = new float[v.length];
        for (int i = 0; i < v.length; i++) {
            f[i] = (float) v[i];
            if (f[i] != v[i]) {
                throw new IllegalStateException("fixture value " + v[i] + " is not a float");
            }
        }
        return f;
    }
}
