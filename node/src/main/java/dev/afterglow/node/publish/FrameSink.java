package dev.afterglow.node.publish;

/**
 * Where a sensor's frames go once read out: its subscribers, the live view, later a message bus.
 * The pipeline reads a frame out only while some sink wants one, and hands each frame to every
 * sink in order, on its own thread.
 */
public interface FrameSink {
    /** True if a frame read out now would go somewhere. Any thread. */
    boolean wantsFrames();

    /** Takes one frame; its arrays are valid only during the call. Must not block. Pipeline thread. */
    void accept(FrameData frame);
}
