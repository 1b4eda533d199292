/**
 * Reconstruction quality against ground truth: the per-frame least-squares affine fit
 * ({@link dev.afterglow.filters.quality.AffineFit}), SSIM after Wang et al. 2004
 * ({@link dev.afterglow.filters.quality.Ssim}), PSNR and MAE
 * ({@link dev.afterglow.filters.quality.ImageQuality}), and the runner that streams a synthetic
 * scene through several chains side by side and scores them
 * ({@link dev.afterglow.filters.quality.QualityRun}), and the denoisers' receiver operating
 * characteristics over one stream ({@link dev.afterglow.filters.quality.DenoiseRoc},
 * {@link dev.afterglow.filters.quality.RocCurve}). No network, no allocation per event.
 */
package dev.afterglow.filters.quality;
