/**
 * The synthetic sensor and its scenes: event generation from known log intensity
 * ({@link dev.afterglow.filters.synth.EventGenerationModel}, the ideal reference model), a
 * simulated sensor with mismatch, refractory period, noise, hot pixels, jitter and its own
 * intensity frames ({@link dev.afterglow.filters.synth.SyntheticSensor}), and the built-in scenes
 * ({@link dev.afterglow.filters.synth.SceneKind}). Used by the node's demo and assessment and by
 * the tests.
 */
package dev.afterglow.filters.synth;
