package dev.afterglow.recording;

import java.io.IOException;

/** A file that is not a recording segment this code can read: no signature, a damaged header, an unknown version. */
public final class RecordingFormatException extends IOException {
    private static final long serialVersionUID = 1L;

    /** With a message naming the file and the problem. */
    public RecordingFormatException(String message) {
        super(message);
    }
}
