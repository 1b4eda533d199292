package dev.afterglow.filters.quality;

/**
 * Scores a reconstructed log image against the true log image the way the quality report states
 * it: a reconstruction knows log intensity only up to an unknown gain and offset, so each frame is
 * first fitted to the truth by least squares ({@code fitted = a·recon + b}, {@link AffineFit});
 * then both images are mapped to a common display range, the truth's min..max of that frame
 * becoming [0, 1] (the fitted image is not clipped), and PSNR (peak 1) and SSIM (data range 1,
 * {@link Ssim}) are computed there. The mean absolute error is reported in natural-log units on
 * the fitted image.
 *
 * <p>Reusable buffers for one image size; the mapped images of the last call are available for
 * display. Threading: one owner thread.
 */
public final class ImageQuality {
    private final int width;
    private final int height;
    private final int pixels;
    private final Ssim ssim;
    private final float[] truthDisplay;
    private final float[] fittedDisplay;
    private double lastLow;
    private double lastHigh;

    /** Buffers for images of {@code width} x {@code height} (at least 11x11, for SSIM). */
    public ImageQuality(int width, int height) {
        this.width = width;
        this.height = height;
        this.pixels = width * height;
        this.ssim = new Ssim(width, height);
        this.truthDisplay = new float[pixels];
        this.fittedDisplay = new float[pixels];
    }

    /** Scores {@code reconLog} against {@code truthLog} (both row-major, width x height). */
    public FrameQuality evaluate(float[] truthLog, float[] reconLog) {
        return evaluate(truthLog, reconLog, null);
    }

    /**
     * Scores {@code reconLog} against {@code truthLog} and also gives the mean of the SSIM map over
     * the pixels where {@code moving} is not 0 (the same fit and display range as the whole
     * image), or NaN when {@code moving} is null or marks no pixel away from the border.
     */
    public FrameQuality evaluate(float[] truthLog, float[] reconLog, byte[] moving) {
        int n = pixels;
        AffineFit fit = AffineFit.fit(reconLog, truthLog, n);
        float min = Float.POSITIVE_INFINITY;
        float max = Float.NEGATIVE_INFINITY;
        for (int i = 0; i < n; i++) {
            min = Math.min(min, truthLog[i]);
            max = Math.max(max, truthLog[i]);
        }
        double range = max > min ? max - min : 1.0;
        lastLow = min;
        lastHigh = min + range;
        double scale = fit.scale();
        double offset = fit.offset();
        double absErr = 0;
        double sqErr = 0;
        for (int i = 0; i < n; i++) {
            double fitted = scale * reconLog[i] + offset;
            double err = fitted - truthLog[i];
            absErr += Math.abs(err);
            double t = (truthLog[i] - min) / range;
            double f = (fitted - min) / range;
            truthDisplay[i] = (float) t;
            fittedDisplay[i] = (float) f;
            sqErr += (err / range) * (err / range);
        }
        double mse = sqErr / n;
        double psnr = mse > 0 ? 10 * Math.log10(1.0 / mse) : Double.POSITIVE_INFINITY;
        double s = ssim.mean(fittedDisplay, truthDisplay, 1.0, moving);
        return new FrameQuality(fit, psnr, s, absErr / n, moving == null ? Double.NaN : ssim.lastMaskedMean());
    }

    /** The truth of the last call on the display range [0, 1]. */
    public float[] truthDisplay() {
        return truthDisplay;
    }

    /** The fitted reconstruction of the last call on the same display range (not clipped). */
    public float[] fittedDisplay() {
        return fittedDisplay;
    }

    /** Log intensity shown as 0 in the last call (the truth's minimum). */
    public double displayLow() {
        return lastLow;
    }

    /** Log intensity shown as 1 in the last call (the truth's maximum). */
    public double displayHigh() {
        return lastHigh;
    }

    /** Image width. */
    public int width() {
        return width;
    }

    /** Image height. */
    public int height() {
        return height;
    }
}
