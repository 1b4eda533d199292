package dev.afterglow.node.pipeline;

/**
 * The frame times of a sensor at a frame rate: frame k is at floor(k * 1e6 / rate) microseconds of
 * sensor time, so every consumer (the live pipeline, the offline renderer) reads out at the same
 * times, bit for bit. Pure functions.
 */
public final class FrameGrid {
    private FrameGrid() {
    }

    /** Sensor time of grid frame {@code k}. */
    public static long frameTime(long k, double rateHz) {
        return (long) Math.floor(k * 1e6 / rateHz + 1e-6);
    }

    /** The largest grid index whose frame time is at or before {@code timeUs}. */
    public static long indexAtOrBefore(long timeUs, double rateHz) {
        long k = (long) Math.floor(timeUs * rateHz / 1e6);
        while (frameTime(k + 1, rateHz) <= timeUs) {
            k++;
        }
        while (frameTime(k, rateHz) > timeUs) {
            k--;
        }
        return k;
    }

    /** The index of the first frame after the sensor's first event: the schedule's start. */
    public static long firstIndexAfter(long firstEventUs, double rateHz) {
        long k = (long) Math.ceil(firstEventUs * rateHz / 1e6 - 1e-9);
        return frameTime(k, rateHz) <= firstEventUs ? k + 1 : k;
    }
}
