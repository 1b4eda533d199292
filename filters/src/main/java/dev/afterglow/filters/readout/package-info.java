/** Readout of reconstructed log intensity to 8-bit images: the tone map and a reusable frame reader. */
package dev.afterglow.filters.readout;
