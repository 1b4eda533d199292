package dev.afterglow.filters.recon;

/**
 * A reconstruction that runs a model at some readouts and repeats its last output at the others:
 * which model it runs, and what the last readout cost, for a frame's provenance and the metrics.
 * Threading: read on the owner thread, right after {@link #readLog}.
 */
public interface InferringReconstruction extends Reconstruction {

    /** The model's identity: its own name and the first 12 hex digits of its file's SHA-256, e.g. {@code ember-1@3f2a9c01b7d4}. */
    String modelIdentity();

    /** Nanoseconds the last {@link #readLog} spent on an inference (grid normalisation, the model, cropping); 0 if it repeated the last output. */
    long lastInferenceNanos();

    /** Inferences run since the stage was built. */
    long inferences();
}
