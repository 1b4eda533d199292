package dev.afterglow.filters.quality;

/**
 * Quality of one reconstructed log image against the true log image, after the per-frame
 * least-squares affine fit (see {@link ImageQuality}).
 *
 * @param fit the fit applied to the reconstruction
 * @param psnrDb peak signal-to-noise ratio in dB on the display range (truth min..max → [0, 1],
 *     peak 1)
 * @param ssim mean SSIM (Wang et al. 2004) on the same display range, data range 1
 * @param maeLog mean absolute error of the fitted reconstruction in natural-log units
 * @param movingSsim mean of the SSIM map over the region where the scene moved (see
 *     {@link ImageQuality#evaluate(float[], float[], byte[])}), NaN when none was given or it was empty
 */
public record FrameQuality(AffineFit fit, double psnrDb, double ssim, double maeLog, double movingSsim) {
}
