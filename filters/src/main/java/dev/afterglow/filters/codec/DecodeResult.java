package dev.afterglow.filters.codec;

/**
 * Outcome of decoding one packet: a status for the packet as a whole and counts of events dropped
 * one by one. Reused by its owning thread to avoid allocation.
 */
public final class DecodeResult {
    /** Whole-packet outcome. */
    public enum Status {
        /** Decoded; individual events may still have been dropped (see the counts). */
        OK,
        /** Byte length is not event count times 8: the packet is rejected. */
        LENGTH_MISMATCH,
        /** More events than the batch can hold: the packet is rejected. */
        TOO_MANY_EVENTS
    }

    /** Whole-packet outcome. */
    public Status status = Status.OK;
    /** Events placed in the batch. */
    public int decoded;
    /** Events dropped because x or y lies outside the sensor. */
    public int outsideSensor;
    /** Events dropped because their offset is 2^30 microseconds or more. */
    public int offsetTooLarge;

    /** Resets to an empty OK result. */
    public void clear() {
        status = Status.OK;
        decoded = 0;
        outsideSensor = 0;
        offsetTooLarge = 0;
    }

    /** True if the packet as a whole was accepted. */
    public boolean ok() {
        return status == Status.OK;
    }
}
