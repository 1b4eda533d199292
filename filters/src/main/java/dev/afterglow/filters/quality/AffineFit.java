package dev.afterglow.filters.quality;

/**
 * Least-squares affine fit {@code y ≈ scale·x + offset} over paired samples: the normal equations
 * of ordinary linear regression, {@code scale = cov(x, y) / var(x)},
 * {@code offset = mean(y) - scale·mean(x)}, with means removed before summing for accuracy. A
 * constant {@code x} gives scale 0 and offset mean(y).
 *
 * @param scale fitted slope
 * @param offset fitted intercept
 */
public record AffineFit(double scale, double offset) {

    /** Fits {@code truth[0..n) ≈ scale·recon[0..n) + offset}. */
    public static AffineFit fit(float[] recon, float[] truth, int n) {
        if (n < 1) {
            throw new IllegalArgumentException("no samples");
        }
        double mx = 0;
        double my = 0;
        for (int i = 0; i < n; i++) {
            mx += recon[i];
            my += truth[i];
        }
        mx /= n;
        my /= n;
        double sxx = 0;
        double sxy = 0;
        for (int i = 0; i < n; i++) {
            double dx = recon[i] - mx;
            sxx += dx * dx;
            sxy += dx * (truth[i] - my);
        }
        double scale = sxx > 0 ? sxy / sxx : 0;
        return new AffineFit(scale, my - scale * mx);
    }

    /** Fits {@code truth[0..n) ≈ scale·recon[0..n) + offset}. */
    public static AffineFit fit(double[] recon, double[] truth, int n) {
        if (n < 1) {
            throw new IllegalArgumentException("no samples");
        }
        double mx = 0;
        double my = 0;
        for (int i = 0; i < n; i++) {
            mx += recon[i];
            my += truth[i];
        }
        mx /= n;
        my /= n;
        double sxx = 0;
        double sxy = 0;
        for (int i = 0; i < n; i++) {
            double dx = recon[i] - mx;
            sxx += dx * dx;
            sxy += dx * (truth[i] - my);
        }
        double scale = sxx > 0 ? sxy / sxx : 0;
        return new AffineFit(scale, my - scale * mx);
    }

    /** {@code scale·x + offset}. */
    public double apply(double x) {
        return scale * x + offset;
    }
}
