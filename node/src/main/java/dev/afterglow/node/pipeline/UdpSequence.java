package dev.afterglow.node.pipeline;

/**
 * Tracks UDP packet sequence numbers over a window of the 64 newest numbers: detects duplicates,
 * reordering and loss. A number that leaves the window without having arrived counts as lost; a
 * packet older than the window is late (and was already counted lost). Single owner thread.
 */
final class UdpSequence {
    /** Outcome for one packet. */
    enum Outcome { NEXT, REORDERED, DUPLICATE, LATE }

    private static final int WINDOW = 64;
    private long highest = -1;
    /** Bit i set: sequence number {@code highest - i} has arrived. */
    private long seen = -1L;
    private long lostSinceLastCall;

    Outcome accept(long seq) {
        if (highest < 0) {
            highest = seq;
            seen = -1L;
            return Outcome.NEXT;
        }
        if (seq > highest) {
            long shift = seq - highest;
            if (shift >= WINDOW) {
                lostSinceLastCall += Long.bitCount(~seen) + (shift - WINDOW);
                seen = 1L;
            } else {
                long leaving = seen >>> (WINDOW - shift);
                long leavingMask = (1L << shift) - 1;
                lostSinceLastCall += Long.bitCount(~leaving & leavingMask);
                seen = (seen << shift) | 1L;
            }
            highest = seq;
            return Outcome.NEXT;
        }
        long back = highest - seq;
        if (back >= WINDOW) {
            return Outcome.LATE;
        }
        long bit = 1L << back;
        if ((seen & bit) != 0) {
            return Outcome.DUPLICATE;
        }
        seen |= bit;
        return Outcome.REORDERED;
    }

    /** Sequence numbers found lost since the previous call. */
    long takeLost() {
        long n = lostSinceLastCall;
        lostSinceLastCall = 0;
        return n;
    }

    void reset() {
        highest = -1;
        seen = -1L;
        lostSinceLastCall = 0;
    }
}
