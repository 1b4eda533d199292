package dev.afterglow.node.publish;

/**
 * Where a sensor's frames go once read out: its subscribers, the live view, later a message bus.
 * The pipeline reads a frame out only while some sink wants one, and hands each frame to every
 * sink in order, on its own thread.
 */
public interface FrameSink {
    /** True if a frame read out now would go somewhere. Any thread. */
    boolean wantsFrames();

    /**
     * True if grid frame {@code frameIndex} (-1: off the grid) of a sensor read out at
     * {@code sensorRateHz} would go somewhere; a sink that takes every k-th frame says no to the
     * others, so the pipeline can skip their readout. Pipeline thread.
     */
    default boolean wantsFrame(long frameIndex, double sensorRateHz) {
        return wantsFrames();
    }

    /** Takes one frame; its arrays are valid only during the call. Must not block. Pipeline thread. */
    void accept(FrameData frame);
}
