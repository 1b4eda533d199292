package dev.afterglow.filters.synth;

import java.util.SplittableRandom;

/** Procedural textures for the scenes, reproducible bit for bit ({@link StrictMath} only). */
final class Textures {
    private Textures() {
    }

    /**
     * Fractal value noise: {@code octaves} layers of random lattice values at spacing
     * {@code cellPx}, {@code cellPx/2}, ... interpolated with a smooth step, amplitudes
     * 1, {@code gain}, gain², ...; the sum is scaled to about [-1, 1]. With {@code periodX} &gt; 0
     * the lattice wraps every {@code periodX} pixels of x (each octave's cell divides it), so the
     * texture tiles horizontally.
     */
    static float[] fractal(int w, int h, double cellPx, int octaves, double gain, SplittableRandom random) {
        float[] out = new float[w * h];
        double amplitude = 1;
        double total = 0;
        double cell = cellPx;
        for (int o = 0; o < octaves; o++) {
            addValueNoise(out, w, h, Math.max(1.0, cell), amplitude, random.split());
            total += amplitude;
            amplitude *= gain;
            cell /= 2;
        }
        float scale = (float) (1 / total);
        for (int i = 0; i < out.length; i++) {
            out[i] *= scale;
        }
        return out;
    }

    private static void addValueNoise(float[] out, int w, int h, double cell, double amplitude, SplittableRandom random) {
        int gw = (int) Math.ceil(w / cell) + 2;
        int gh = (int) Math.ceil(h / cell) + 2;
        double[] lattice = new double[gw * gh];
        for (int i = 0; i < lattice.length; i++) {
            lattice[i] = random.nextDouble() * 2 - 1;
        }
        for (int y = 0; y < h; y++) {
            double gy = y / cell;
            int iy = (int) gy;
            double fy = smooth(gy - iy);
            for (int x = 0; x < w; x++) {
                double gx = x / cell;
                int ix = (int) gx;
                double fx = smooth(gx - ix);
                double v00 = lattice[iy * gw + ix];
                double v10 = lattice[iy * gw + ix + 1];
                double v01 = lattice[(iy + 1) * gw + ix];
                double v11 = lattice[(iy + 1) * gw + ix + 1];
                double top = v00 + fx * (v10 - v00);
                double bottom = v01 + fx * (v11 - v01);
                out[y * w + x] += (float) (amplitude * (top + fy * (bottom - top)));
            }
        }
    }

    /** The smooth step 3t² - 2t³ on [0, 1]. */
    static double smooth(double t) {
        return t * t * (3 - 2 * t);
    }

    /** Clamps {@code v} to [lo, hi]. */
    static double clamp(double v, double lo, double hi) {
        return v < lo ? lo : (v > hi ? hi : v);
    }

    /** Natural log of {@code v}, for building log-irradiance images. */
    static float ln(double v) {
        return (float) StrictMath.log(v);
    }

    /**
     * Coverage in [0, 1] of a pixel centred at {@code p} by the interval [{@code a}, {@code b}]
     * (1-pixel box filter), so edges drawn at fractional positions are anti-aliased.
     */
    static double cover(double p, double a, double b) {
        double lo = Math.max(p - 0.5, a);
        double hi = Math.min(p + 0.5, b);
        return hi > lo ? hi - lo : 0;
    }
}
