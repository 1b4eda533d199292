/**
 * Denoise stages: refractory, hot-pixel and background-activity (nearest-neighbour and k-of-8
 * correlation) filters. Each compacts an {@link dev.afterglow.filters.EventBatch} in place.
 */
package dev.afterglow.filters.denoise;
