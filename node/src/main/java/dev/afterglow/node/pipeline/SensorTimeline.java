package dev.afterglow.node.pipeline;

/**
 * Decides whether a packet's time fits the sensor's recent timeline before it can touch any
 * state. The timeline is the clock mapping ({@link ClockMapper}): a packet whose newest event lies
 * more than {@code maxAheadUs} ahead of the sensor time the mapping expects at its arrival is
 * {@link Verdict#FUTURE}; one whose newest event is more than {@link #RESTART_THRESHOLD_US} before
 * the newest event accepted so far is {@link Verdict#PAST}. Both are rejected, so one forged or corrupt
 * packet can neither drag the mapping nor make the sensor's real packets late.
 *
 * <p>A sensor whose clock really jumped (it restarted, or was re-synchronised) sends a run of
 * packets off the old timeline that agree with each other: after {@value #RESYNC_PACKETS} such
 * packets in a row, spanning at least {@value #RESYNC_SPAN_US} us of host time with no packet on
 * the old timeline in between, the verdict is {@link Verdict#RESYNC} and the pipeline starts
 * afresh on the new timeline. A sensor that has just (re)connected over TCP resynchronises on its
 * first packet ({@link #open()}): its own connection vouches for it. Single owner thread.
 */
final class SensorTimeline {
    /** Outcome for one packet. */
    enum Verdict { ON, FUTURE, PAST, RESYNC }

    /** A jump back by more than this many microseconds of sensor time is off the timeline. */
    static final long RESTART_THRESHOLD_US = 10_000_000;
    static final int RESYNC_PACKETS = 8;
    static final long RESYNC_SPAN_US = 200_000;
    /** Packets of one run may disagree by this much (arrival jitter). */
    static final long RESYNC_TOLERANCE_US = 50_000;

    private final ClockMapper mapper;
    private final long maxAheadUs;
    private boolean open;
    private int run;
    private long runOffsetUs;
    private long runStartUs;

    SensorTimeline(ClockMapper mapper, long maxAheadUs) {
        this.mapper = mapper;
        this.maxAheadUs = maxAheadUs;
    }

    /** Largest lead of a packet over the timeline, microseconds. */
    long maxAheadUs() {
        return maxAheadUs;
    }

    /** The next packet off the timeline resynchronises at once (a new connection of the sensor). */
    void open() {
        open = true;
    }

    /**
     * Checks a packet that arrived at host {@code arrivalUs} with newest event {@code newestUs};
     * {@code newestAcceptedUs} is the newest event time accepted so far or {@code Long.MIN_VALUE}.
     */
    Verdict check(long arrivalUs, long newestUs, long newestAcceptedUs) {
        boolean future = mapper.ready() && mapper.offsetUs() - (arrivalUs - newestUs) > maxAheadUs;
        boolean past = newestAcceptedUs != Long.MIN_VALUE && newestUs < newestAcceptedUs - RESTART_THRESHOLD_US;
        if (!future && !past) {
            run = 0;
            open = false;
            return Verdict.ON;
        }
        if (open) {
            open = false;
            run = 0;
            return Verdict.RESYNC;
        }
        long offset = arrivalUs - newestUs;
        if (run > 0 && Math.abs(offset - runOffsetUs) <= RESYNC_TOLERANCE_US) {
            run++;
        } else {
            run = 1;
            runOffsetUs = offset;
            runStartUs = arrivalUs;
        }
        if (run >= RESYNC_PACKETS && arrivalUs - runStartUs >= RESYNC_SPAN_US) {
            run = 0;
            return Verdict.RESYNC;
        }
        return future ? Verdict.FUTURE : Verdict.PAST;
    }

    /** Forgets any run in progress. */
    void reset() {
        run = 0;
        open = false;
    }
}
