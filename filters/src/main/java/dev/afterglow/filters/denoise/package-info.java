/**
 * Denoise stages: refractory, hot-pixel and background-activity (nearest-neighbour and k-of-8
 * correlation) filters, and the patch-support filter (k of the other pixels of a 5x5 patch). Each
 * compacts an {@link dev.afterglow.filters.EventBatch} in place.
 */
package dev.afterglow.filters.denoise;
