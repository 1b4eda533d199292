package dev.afterglow.filters.recon;

import dev.afterglow.filters.EventStage;

/**
 * The last stage of a chain: applies every event it receives to per-pixel log-intensity state and
 * can be read out at any time. Its counters report events applied ({@code eventsOut}); it removes
 * none except events older than its state can represent (see each implementation).
 *
 * <p>Threading: single owner thread, like every stage; read out on the same thread.
 */
public interface Reconstruction extends EventStage {

    /** Sensor width in pixels. */
    int width();

    /** Sensor height in pixels. */
    int height();

    /** Contrast threshold C in natural-log units: the log-intensity step one event stands for. */
    double contrast();

    /**
     * Writes the log intensity of every pixel at sensor time {@code timeUs} into
     * {@code out[0 .. width*height)}, row-major. Includes every event applied so far, so call it
     * after the events up to {@code timeUs} and before later ones.
     */
    void readLog(long timeUs, float[] out);

    /**
     * Tells the stage that a frame time passed without a readout (nobody was watching, or the
     * frame was shed under overload). Stages whose work does not depend on readouts ignore it (the
     * default); one with a costly step per window of time (the learned reconstruction) drops the
     * windows that ended by then, unprocessed, so frames nobody reads cost nothing.
     */
    default void readoutSkipped(long timeUs) {
    }
}
