package dev.afterglow.node.recording;

/** A line of an event list that cannot be imported; the message names the line and why. */
public final class BadEventLineException extends RuntimeException {
    private static final long serialVersionUID = 1L;

    /** With "line N: why". */
    public BadEventLineException(String message) {
        super(message);
    }
}
