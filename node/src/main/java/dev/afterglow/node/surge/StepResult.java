package dev.afterglow.node.surge;

import java.util.List;
import java.util.Locale;
import java.util.function.Function;
import org.HdrHistogram.Histogram;

/**
 * The numbers of one step of a sweep, summed over its sensors and subscribers, and the report's
 * columns ({@link #COLUMNS}), shared by the table on stdout and the CSV.
 *
 * <p>Event accounting, from the node's counters (differences across the step):
 * {@code received} = events in every packet the node took in, by transport
 * ({@code afterglow_ingest_tcp_events_total + afterglow_ingest_udp_events_total}); {@code applied} =
 * events that entered the chain's first stage ({@code afterglow_stage_input_events_total{position="0"}});
 * {@code dropped} = events outside the sensor or late; {@code rejected} = events in packets
 * rejected whole (malformed, UDP duplicate or late). The node's own accounting must close,
 * {@code received = applied + dropped + shed(latency) + shed(queue) + rejected}, and the generator's
 * count must match it: {@link #difference()} is {@code sent} minus that sum (UDP datagrams lost on
 * the way show up there).
 *
 * @param step 1-based step number
 * @param rateLabel the rate as asked (per sensor), e.g. {@code 2M} or {@code max}
 * @param seconds host seconds the senders sent for (mean over sensors)
 * @param windowSeconds sensor seconds of the measured window (mean over sensors)
 * @param sensors sensors streaming
 * @param sent events sent
 * @param packetsSent packets sent
 * @param received events in packets the node took in (TCP and UDP)
 * @param reachedChain events in packets that reached the chain
 * @param applied events that entered the chain's first stage
 * @param outside events dropped outside the sensor
 * @param late events dropped as late
 * @param shedLatency events shed for the latency budget
 * @param shedQueue events shed for a full queue
 * @param rejected events in packets rejected whole
 * @param packetsReceived packets the node counted (TCP and UDP)
 * @param packetsMalformed packets the node rejected as malformed
 * @param udpLost UDP packets the node saw missing from the sequence
 * @param framesPublished frames the node published
 * @param nodeFramesMissed frames the node did not send to a backed-up subscriber
 * @param framesSkipped frame times the node skipped as too late
 * @param framesPerSubscriber frames each subscriber received in the window
 * @param missed frames missing on the node's grid, over all subscribers
 * @param untimed frames received whose sensor time was not in the send log
 * @param ownClock frame age on the generator's clock, us
 * @param sensorToPublish the frames' {@code sensor_to_publish_us}
 * @param arrivalToPublish the frames' {@code arrival_to_publish_us}
 * @param drained true if the node's counters settled before they were read
 */
public record StepResult(
        int step,
        String rateLabel,
        double seconds,
        double windowSeconds,
        int sensors,
        long sent,
        long packetsSent,
        long received,
        long reachedChain,
        long applied,
        long outside,
        long late,
        long shedLatency,
        long shedQueue,
        long rejected,
        long packetsReceived,
        long packetsMalformed,
        long udpLost,
        long framesPublished,
        long nodeFramesMissed,
        long framesSkipped,
        long[] framesPerSubscriber,
        long missed,
        long untimed,
        Histogram ownClock,
        Histogram sensorToPublish,
        Histogram arrivalToPublish,
        boolean drained) {

    /** A report column: CSV header name and the value as text ("" when there is nothing to show). */
    public record Column(String name, Function<StepResult, String> value) {
    }

    /** Every column, in report order. */
    public static final List<Column> COLUMNS = List.of(
            new Column("step", r -> Integer.toString(r.step)),
            new Column("rate_asked", StepResult::rateLabel),
            new Column("offered_ev_s", r -> rate(r.offeredPerSecond())),
            new Column("offered_per_sensor_ev_s", r -> rate(r.offeredPerSecond() / r.sensors)),
            new Column("applied_ev_s", r -> rate(r.applied / r.seconds)),
            new Column("shed_pct", r -> r.sent == 0 ? "" : String.format(Locale.ROOT, "%.2f", 100.0 * (r.shedLatency + r.shedQueue) / r.sent)),
            new Column("e2e_p50_ms", r -> ms(r.ownClock, 50)),
            new Column("e2e_p99_ms", r -> ms(r.ownClock, 99)),
            new Column("e2e_p999_ms", r -> ms(r.ownClock, 99.9)),
            new Column("e2e_max_ms", r -> ms(r.ownClock, 100)),
            new Column("s2p_p50_ms", r -> ms(r.sensorToPublish, 50)),
            new Column("s2p_p99_ms", r -> ms(r.sensorToPublish, 99)),
            new Column("s2p_p999_ms", r -> ms(r.sensorToPublish, 99.9)),
            new Column("s2p_max_ms", r -> ms(r.sensorToPublish, 100)),
            new Column("a2p_p50_ms", r -> ms(r.arrivalToPublish, 50)),
            new Column("a2p_p99_ms", r -> ms(r.arrivalToPublish, 99)),
            new Column("a2p_p999_ms", r -> ms(r.arrivalToPublish, 99.9)),
            new Column("a2p_max_ms", r -> ms(r.arrivalToPublish, 100)),
            new Column("frames_s_per_sub", r -> r.framesPerSubscriber.length == 0 || r.windowSeconds <= 0 ? ""
                    : String.format(Locale.ROOT, "%.1f", r.meanFrames() / r.windowSeconds)),
            new Column("frames_min_sub", r -> r.framesPerSubscriber.length == 0 ? "" : Long.toString(r.minFrames())),
            new Column("missed", r -> Long.toString(r.missed)),
            new Column("node_missed", r -> Long.toString(r.nodeFramesMissed)),
            new Column("node_skipped", r -> Long.toString(r.framesSkipped)),
            new Column("sent", r -> Long.toString(r.sent)),
            new Column("received", r -> Long.toString(r.received)),
            new Column("applied", r -> Long.toString(r.applied)),
            new Column("dropped", r -> Long.toString(r.outside + r.late)),
            new Column("dropped_outside", r -> Long.toString(r.outside)),
            new Column("dropped_late", r -> Long.toString(r.late)),
            new Column("shed_latency", r -> Long.toString(r.shedLatency)),
            new Column("shed_queue", r -> Long.toString(r.shedQueue)),
            new Column("rejected", r -> Long.toString(r.rejected)),
            new Column("malformed_packets", r -> Long.toString(r.packetsMalformed)),
            new Column("difference", r -> Long.toString(r.difference())),
            new Column("seconds", r -> String.format(Locale.ROOT, "%.3f", r.seconds)));

    /** Events offered per host second, all sensors. */
    public double offeredPerSecond() {
        return seconds > 0 ? sent / seconds : Double.NaN;
    }

    /** What the node accounted for: applied, dropped, shed and rejected. */
    public long accounted() {
        return applied + outside + late + shedLatency + shedQueue + rejected;
    }

    /** Sent minus what the node accounted for; 0 when every event is accounted for. */
    public long difference() {
        return sent - accounted();
    }

    /** Fewest frames any subscriber received. */
    public long minFrames() {
        long min = Long.MAX_VALUE;
        for (long f : framesPerSubscriber) {
            min = Math.min(min, f);
        }
        return framesPerSubscriber.length == 0 ? 0 : min;
    }

    private double meanFrames() {
        double sum = 0;
        for (long f : framesPerSubscriber) {
            sum += f;
        }
        return sum / framesPerSubscriber.length;
    }

    /** The step's value in {@code column}. */
    public String value(Column column) {
        return column.value().apply(this);
    }

    /** Percentile {@code p} (100: the maximum) of {@code h} in milliseconds, or NaN if empty. */
    public static double percentileMs(Histogram h, double p) {
        if (h.getTotalCount() == 0) {
            return Double.NaN;
        }
        long us = p >= 100 ? h.getMaxValue() : h.getValueAtPercentile(p);
        return us / 1000.0;
    }

    private static String ms(Histogram h, double p) {
        double v = percentileMs(h, p);
        return Double.isNaN(v) ? "" : String.format(Locale.ROOT, "%.3f", v);
    }

    private static String rate(double perSecond) {
        return Double.isFinite(perSecond) ? String.format(Locale.ROOT, "%.0f", perSecond) : "";
    }

    /**
     * The consistency line: events sent against the node's accounting, with the difference, e.g.
     * {@code step 1: sent 400000 = applied 399998 + dropped 2 + shed 0 (latency 0, queue 0); malformed packets 0; difference 0}.
     */
    public String consistencyLine() {
        return String.format(Locale.ROOT,
                "step %d: sent %d = applied %d + dropped %d (outside %d, late %d) + shed %d (latency %d, queue %d)"
                        + " + rejected %d; node received %d; packets sent %d, node counted %d, malformed %d%s; difference %d%s",
                step, sent, applied, outside + late, outside, late, shedLatency + shedQueue, shedLatency, shedQueue,
                rejected, received, packetsSent, packetsReceived, packetsMalformed,
                udpLost > 0 ? ", UDP lost " + udpLost : "", difference(), drained ? "" : " (node had not settled)");
    }
}
