package dev.afterglow.node.pipeline;

/**
 * Tracks UDP packet sequence numbers (unsigned 64-bit) over a window of the 64 newest numbers:
 * detects duplicates, reordering and loss. A number that leaves the window without having arrived
 * counts as lost; a packet older than the window is late (and was already counted lost).
 *
 * <p>A number more than {@value #MAX_JUMP} away from the newest, either way, is out of step: it is
 * dropped as late and does not move the window, so one stray or forged number cannot make every
 * later packet late. If the sender really jumped (it restarted its numbering), its next packets
 * agree with the jump: after {@value #RESYNC_PACKETS} out-of-step packets in a row that follow on
 * from each other, the window restarts from them ({@link #takeResyncs()}). Single owner thread.
 */
final class UdpSequence {
    /** Outcome for one packet. */
    enum Outcome { NEXT, REORDERED, DUPLICATE, LATE }

    private static final int WINDOW = 64;
    static final long MAX_JUMP = 4096;
    static final int RESYNC_PACKETS = 8;

    private boolean started;
    private long highest;
    /** Bit i set: sequence number {@code highest - i} has arrived. */
    private long seen = -1L;
    private long lostSinceLastCall;
    private int run;
    private long runHighest;
    private long resyncs;

    Outcome accept(long seq) {
        if (!started) {
            restartAt(seq);
            return Outcome.NEXT;
        }
        long ahead = seq - highest; // wraps correctly for unsigned numbers
        if (ahead > MAX_JUMP || ahead < -MAX_JUMP) {
            return outOfStep(seq);
        }
        run = 0;
        if (ahead > 0) {
            if (ahead >= WINDOW) {
                lostSinceLastCall += Long.bitCount(~seen) + (ahead - WINDOW);
                seen = 1L;
            } else {
                long leaving = seen >>> (WINDOW - ahead);
                long leavingMask = (1L << ahead) - 1;
                lostSinceLastCall += Long.bitCount(~leaving & leavingMask);
                seen = (seen << ahead) | 1L;
            }
            highest = seq;
            return Outcome.NEXT;
        }
        long back = -ahead;
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

    private Outcome outOfStep(long seq) {
        long step = seq - runHighest;
        if (run > 0 && step > 0 && step <= WINDOW) {
            run++;
            runHighest = seq;
        } else {
            run = 1;
            runHighest = seq;
        }
        if (run >= RESYNC_PACKETS) {
            resyncs++;
            restartAt(seq);
            return Outcome.NEXT;
        }
        return Outcome.LATE;
    }

    private void restartAt(long seq) {
        started = true;
        highest = seq;
        seen = -1L;
        run = 0;
    }

    /** Sequence numbers found lost since the previous call. */
    long takeLost() {
        long n = lostSinceLastCall;
        lostSinceLastCall = 0;
        return n;
    }

    /** Times the window restarted after a run of out-of-step packets, since the previous call. */
    long takeResyncs() {
        long n = resyncs;
        resyncs = 0;
        return n;
    }

    void reset() {
        started = false;
        seen = -1L;
        lostSinceLastCall = 0;
        run = 0;
    }
}
