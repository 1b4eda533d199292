package dev.afterglow.node.pipeline;

/**
 * Decides whether a packet's time fits the sensor's recent timeline before it can touch any
 * state. The timeline is the clock mapping ({@link ClockMapper}): a packet whose newest event lies
 * more than {@code maxAheadUs} ahead of the sensor time the mapping expects at its arrival is
 * {@link Verdict#FUTURE}, unless it follows on from the sensor's own latest packet ({@link #OWN_LEAD_US});
 * one whose newest event is more than {@link #RESTART_THRESHOLD_US} before
 * the newest event accepted so far is {@link Verdict#PAST}. Both are rejected, so one forged or corrupt
 * packet can neither drag the mapping nor make the sensor's real packets late.
 *
 * <p>A sensor whose clock really jumped (it restarted, or was re-synchronised) sends a run of
 * packets off the old timeline that agree with each other: after {@value #RESYNC_PACKETS} such
 * packets in a row, spanning at least {@value #RESYNC_SPAN_US} us of host time with no packet on
 * the old timeline in between, the verdict is {@link Verdict#RESYNC} and the pipeline starts
 * afresh on the new timeline. If the run is ahead by less than {@link #RESTART_THRESHOLD_US}, it is
 * the mapping that was wrong, not the sensor's clock (its first packets were held up, say): the
 * verdict is {@link Verdict#REANCHOR}, the mapping starts again and the sensor's state is kept.
 * A sensor that has just (re)connected over TCP does the same on its first packet
 * ({@link #open()}): its own connection vouches for it. Single owner thread.
 */
final class SensorTimeline {
    /** Outcome for one packet. */
    enum Verdict { ON, FUTURE, PAST, REANCHOR, RESYNC }

    /** A jump back by more than this many microseconds of sensor time is off the timeline. */
    static final long RESTART_THRESHOLD_US = 10_000_000;
    static final int RESYNC_PACKETS = 8;
    static final long RESYNC_SPAN_US = 200_000;
    /** Packets of one run may disagree by this much (arrival jitter). */
    static final long RESYNC_TOLERANCE_US = 50_000;
    /**
     * A packet may lead the sensor's own latest packet by the host time between their arrivals plus
     * this much, whatever the mapping says: a stream that was held up and catches up in a burst
     * (or whose first packets came late, so the mapping is behind) is followed, while a forged
     * packet gains at most this much on the real stream.
     */
    static final long OWN_LEAD_US = 20_000;

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

    /**
     * How far sensor time {@code sensorUs}, seen at host time {@code hostUs}, is ahead of the sensor
     * time the clock mapping expects then (0 before the mapping has a packet).
     */
    long leadUs(long hostUs, long sensorUs) {
        return mapper.ready() ? sensorUs - (hostUs - mapper.offsetUs()) : 0;
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
     * {@code newestAcceptedUs} is the newest event time accepted so far or {@code Long.MIN_VALUE},
     * {@code newestAcceptedArrivalUs} the host arrival of the packet that brought it.
     */
    Verdict check(long arrivalUs, long newestUs, long newestAcceptedUs, long newestAcceptedArrivalUs) {
        long mappingLead = leadUs(arrivalUs, newestUs);
        boolean followsOwnStream = newestAcceptedUs != Long.MIN_VALUE
                && newestUs - newestAcceptedUs <= (arrivalUs - newestAcceptedArrivalUs) + OWN_LEAD_US;
        boolean future = mappingLead > maxAheadUs && (mappingLead > RESTART_THRESHOLD_US || !followsOwnStream);
        boolean past = newestAcceptedUs != Long.MIN_VALUE && newestUs < newestAcceptedUs - RESTART_THRESHOLD_US;
        if (!future && !past) {
            run = 0;
            open = false;
            return Verdict.ON;
        }
        // Ahead, but by less than a restart: sensor time still runs forward, only the mapping moves.
        boolean mappingOnly = future && !past && mappingLead < RESTART_THRESHOLD_US;
        if (open) {
            open = false;
            run = 0;
            return mappingOnly ? Verdict.REANCHOR : Verdict.RESYNC;
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
            return mappingOnly ? Verdict.REANCHOR : Verdict.RESYNC;
        }
        return future ? Verdict.FUTURE : Verdict.PAST;
    }

    /** Forgets any run in progress. */
    void reset() {
        run = 0;
        open = false;
    }
}
