package dev.afterglow.filters.recon;

/**
 * A reconstruction that runs a model on windows of sensor time and reads out its latest output:
 * which model it runs, and what the inferences since the previous readout cost, for a frame's
 * provenance and the metrics.
 * Threading: read on the owner thread, right after {@link #readLog}.
 */
public interface InferringReconstruction extends Reconstruction {

    /** The model's identity: its own name and the first 12 hex digits of its file's SHA-256, e.g. {@code ember-3@ac0976481e1b}. */
    String modelIdentity();

    /**
     * Nanoseconds spent on inferences (grid normalisation, the model, cropping) between the
     * previous {@link #readLog} and the last one, whether run while processing events or at the
     * readout; 0 if the last readout repeated an earlier output.
     */
    long lastInferenceNanos();

    /** Inferences run since the stage was built. */
    long inferences();
}
