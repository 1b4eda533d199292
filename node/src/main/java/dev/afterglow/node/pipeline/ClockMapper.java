package dev.afterglow.node.pipeline;

/**
 * Maps a sensor's clock to the host's monotonic clock with a running minimum of
 * (arrival time - sensor time of the newest event in the packet): the minimum is reached by the
 * packet that travelled fastest, so {@code sensorUs + offset} is the earliest host time at which
 * an event could have been seen, and {@code now - (sensorUs + offset)} bounds from below how old
 * it is. The minimum is kept over two alternating windows of host time so slow drift between the
 * clocks is followed. Single owner thread.
 */
final class ClockMapper {
    private static final long WINDOW_US = 10_000_000;

    private long current = Long.MAX_VALUE;
    private long previous = Long.MAX_VALUE;
    private long windowStartUs = Long.MIN_VALUE;

    /** Records a packet that arrived at host {@code arrivalUs} whose newest event is at sensor {@code sensorUs}. */
    void observe(long arrivalUs, long sensorUs) {
        if (windowStartUs == Long.MIN_VALUE) {
            windowStartUs = arrivalUs;
        } else if (arrivalUs - windowStartUs >= WINDOW_US) {
            previous = current;
            current = Long.MAX_VALUE;
            windowStartUs = arrivalUs;
        }
        current = Math.min(current, arrivalUs - sensorUs);
    }

    /** True once a packet has been observed. */
    boolean ready() {
        return current != Long.MAX_VALUE || previous != Long.MAX_VALUE;
    }

    /** Host offset: host microseconds = sensor microseconds + offset. */
    long offsetUs() {
        return Math.min(current, previous);
    }

    /** Host time (monotonic microseconds) of sensor time {@code sensorUs}. */
    long toHostUs(long sensorUs) {
        return sensorUs + offsetUs();
    }

    /** Forgets everything (sensor clock restarted). */
    void reset() {
        current = Long.MAX_VALUE;
        previous = Long.MAX_VALUE;
        windowStartUs = Long.MIN_VALUE;
    }
}
