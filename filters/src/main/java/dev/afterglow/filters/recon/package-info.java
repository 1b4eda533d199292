/**
 * Reconstruction stages: per-pixel log-intensity state updated asynchronously by each event and
 * read out at any time: direct integration, the high-pass filter and the complementary filter.
 */
package dev.afterglow.filters.recon;
