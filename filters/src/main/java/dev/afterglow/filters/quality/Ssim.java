package dev.afterglow.filters.quality;

/**
 * Structural similarity (SSIM) of Z. Wang, A. C. Bovik, H. R. Sheikh and E. P. Simoncelli, "Image
 * quality assessment: from error visibility to structural similarity", IEEE Trans. Image
 * Processing 13(4), 2004: local means, variances and covariance under a Gaussian window
 * (σ = 1.5), {@code K1 = 0.01}, {@code K2 = 0.03}, {@code C1 = (K1·R)²}, {@code C2 = (K2·R)²}
 * for data range R, and
 * {@code SSIM = (2·μx·μy + C1)(2·σxy + C2) / ((μx² + μy² + C1)(σx² + σy² + C2))}, averaged over
 * the image.
 *
 * <p>Conventions, chosen to match {@code skimage.metrics.structural_similarity(im1, im2,
 * gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=R)} (scikit-image
 * 0.19): the window is the normalised Gaussian {@code exp(-x²/(2σ²))} sampled at integer offsets
 * up to radius {@code int(3.5·σ + 0.5) = 5} (11 taps, as in the paper), applied separably;
 * variances are population moments (E[x²] - μ², no n/(n-1)); and the mean is taken over the
 * pixels at least 5 from every border, where the window lies wholly inside the image. So border
 * handling never enters the result (scikit-image pads by reflection and then crops the same
 * 5-pixel border). Images must be at least 11x11.
 *
 * <p>Computed in double precision with reusable buffers: one instance per image size. Threading:
 * one owner thread.
 */
public final class Ssim {
    /** Gaussian window standard deviation (Wang et al. 2004). */
    public static final double SIGMA = 1.5;
    /** Window radius in pixels: int(3.5·σ + 0.5), 11 taps. */
    public static final int RADIUS = 5;
    /** Stabilising constant K1 (Wang et al. 2004). */
    public static final double K1 = 0.01;
    /** Stabilising constant K2 (Wang et al. 2004). */
    public static final double K2 = 0.03;

    private static final double[] WEIGHTS = weights();

    private final int width;
    private final int height;
    private final double[] hx;
    private final double[] hy;
    private final double[] hxx;
    private final double[] hyy;
    private final double[] hxy;
    private double lastMaskedMean = Double.NaN;

    /**
     * @param width image width, at least 11
     * @param height image height, at least 11
     */
    public Ssim(int width, int height) {
        if (width < 2 * RADIUS + 1 || height < 2 * RADIUS + 1) {
            throw new IllegalArgumentException("SSIM needs at least 11x11 pixels, got " + width + "x" + height);
        }
        this.width = width;
        this.height = height;
        int inner = (width - 2 * RADIUS) * height;
        hx = new double[inner];
        hy = new double[inner];
        hxx = new double[inner];
        hyy = new double[inner];
        hxy = new double[inner];
    }

    private static double[] weights() {
        double[] w = new double[2 * RADIUS + 1];
        double sum = 0;
        for (int k = -RADIUS; k <= RADIUS; k++) {
            w[k + RADIUS] = Math.exp(-0.5 * k * k / (SIGMA * SIGMA));
            sum += w[k + RADIUS];
        }
        for (int k = 0; k < w.length; k++) {
            w[k] /= sum;
        }
        return w;
    }

    /** Mean SSIM of two images given as doubles, row-major. */
    public double mean(double[] a, double[] b, double dataRange) {
        return compute(a, null, b, null, dataRange, null);
    }

    /** Mean SSIM of two images given as floats, row-major (computed in double). */
    public double mean(float[] a, float[] b, double dataRange) {
        return compute(null, a, null, b, dataRange, null);
    }

    /**
     * Mean SSIM of two float images over the whole image, as {@link #mean(float[], float[], double)},
     * and in the same pass the mean of the SSIM map over the pixels where {@code mask} is not 0
     * (among those at least 5 from every border), read with {@link #lastMaskedMean()}.
     */
    public double mean(float[] a, float[] b, double dataRange, byte[] mask) {
        return compute(null, a, null, b, dataRange, mask);
    }

    /**
     * The mean of the SSIM map over the masked pixels of the last call with a mask; NaN when the
     * mask held no pixel away from the border, or the last call had no mask.
     */
    public double lastMaskedMean() {
        return lastMaskedMean;
    }

    private double compute(double[] ad, float[] af, double[] bd, float[] bf, double dataRange, byte[] mask) {
        if (!(dataRange > 0)) {
            throw new IllegalArgumentException("data range " + dataRange + " must be > 0");
        }
        int w = width;
        int h = height;
        int iw = w - 2 * RADIUS;
        double[] k = WEIGHTS;
        // Horizontal pass: every row, the columns whose window fits.
        for (int y = 0; y < h; y++) {
            int row = y * w;
            for (int x = RADIUS; x < w - RADIUS; x++) {
                double sx = 0;
                double sy = 0;
                double sxx = 0;
                double syy = 0;
                double sxy = 0;
                for (int j = -RADIUS; j <= RADIUS; j++) {
                    int i = row + x + j;
                    double va = ad != null ? ad[i] : af[i];
                    double vb = bd != null ? bd[i] : bf[i];
                    double wt = k[j + RADIUS];
                    sx += wt * va;
                    sy += wt * vb;
                    sxx += wt * (va * va);
                    syy += wt * (vb * vb);
                    sxy += wt * (va * vb);
                }
                int o = y * iw + x - RADIUS;
                hx[o] = sx;
                hy[o] = sy;
                hxx[o] = sxx;
                hyy[o] = syy;
                hxy[o] = sxy;
            }
        }
        double c1 = (K1 * dataRange) * (K1 * dataRange);
        double c2 = (K2 * dataRange) * (K2 * dataRange);
        double total = 0;
        double maskedTotal = 0;
        long masked = 0;
        for (int y = RADIUS; y < h - RADIUS; y++) {
            for (int x = 0; x < iw; x++) {
                double ux = 0;
                double uy = 0;
                double uxx = 0;
                double uyy = 0;
                double uxy = 0;
                for (int j = -RADIUS; j <= RADIUS; j++) {
                    int o = (y + j) * iw + x;
                    double wt = k[j + RADIUS];
                    ux += wt * hx[o];
                    uy += wt * hy[o];
                    uxx += wt * hxx[o];
                    uyy += wt * hyy[o];
                    uxy += wt * hxy[o];
                }
                double vx = uxx - ux * ux;
                double vy = uyy - uy * uy;
                double vxy = uxy - ux * uy;
                double local = (2 * ux * uy + c1) * (2 * vxy + c2) / ((ux * ux + uy * uy + c1) * (vx + vy + c2));
                total += local;
                if (mask != null && mask[y * w + x + RADIUS] != 0) {
                    maskedTotal += local;
                    masked++;
                }
            }
        }
        lastMaskedMean = masked > 0 ? maskedTotal / masked : Double.NaN;
        return total / ((double) iw * (h - 2 * RADIUS));
    }
}
