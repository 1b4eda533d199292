package dev.afterglow.node.stats;

/**
 * Every counter the node keeps, declared once with a stable Prometheus-style name (base unit and
 * {@code _total} are added by the exporter) and help text. {@link Scope#SENSOR} counters exist per
 * sensor, {@link Scope#NODE} counters once.
 */
public enum NodeCounter {
    PACKETS_TCP(Scope.SENSOR, "afterglow.ingest.tcp.packets", "Event packets received over TCP"),
    PACKETS_UDP(Scope.SENSOR, "afterglow.ingest.udp.packets", "Event packets received over UDP"),
    EVENTS_TCP(Scope.SENSOR, "afterglow.ingest.tcp.events", "Events in packets received over TCP (before any check or shedding)"),
    EVENTS_UDP(Scope.SENSOR, "afterglow.ingest.udp.events", "Events in packets received over UDP (before any check or shedding)"),
    PACKETS_KAFKA(Scope.SENSOR, "afterglow.ingest.kafka.packets", "Event packets taken from the event topic"),
    EVENTS_KAFKA(Scope.SENSOR, "afterglow.ingest.kafka.events", "Events in packets taken from the event topic (before any check or shedding)"),
    KAFKA_SKIPPED_RECORDS(Scope.SENSOR, "afterglow.kafka.skipped.records", "Event-topic records skipped because they were older than the latency budget (plus transit allowance) when read: the node skipped ahead"),
    KAFKA_SKIPPED_EVENTS(Scope.SENSOR, "afterglow.kafka.skipped.events", "Events in skipped event-topic records"),
    KAFKA_REREAD_RECORDS(Scope.SENSOR, "afterglow.kafka.reread.records", "Event-topic records read again after an unclean hand-over: the previous owner may have applied them (an upper bound)"),
    KAFKA_REREAD_EVENTS(Scope.SENSOR, "afterglow.kafka.reread.events", "Events in records read again after an unclean hand-over"),
    KAFKA_FORWARDED(Scope.SENSOR, "afterglow.kafka.forwarded.messages", "Messages (hello, event packets, sensor frames) forwarded to the event topic"),
    KAFKA_FORWARD_DROPPED(Scope.SENSOR, "afterglow.kafka.forward.dropped.messages", "Messages not forwarded: the producer's buffer was full or the broker refused them"),
    KAFKA_FRAMES_PRODUCED(Scope.SENSOR, "afterglow.kafka.frames.produced", "Frames written to the frame topic"),
    KAFKA_FRAMES_DROPPED(Scope.SENSOR, "afterglow.kafka.frames.dropped", "Frames not written to the frame topic: the producer's buffer was full or the broker refused them"),
    BACKPRESSURE_PAUSES(Scope.SENSOR, "afterglow.ingest.backpressure.pauses", "Times the node stopped reading a sensor's TCP connection until its queue drained (overload: backpressure)"),
    EVENTS_REJECTED(Scope.SENSOR, "afterglow.ingest.rejected.events", "Events in packets rejected whole: malformed, or UDP duplicate or too late"),
    EVENTS_RECEIVED(Scope.SENSOR, "afterglow.ingest.events", "Events in packets that reached the chain (not shed, not malformed)"),
    SENSOR_FRAMES(Scope.SENSOR, "afterglow.ingest.sensor.frames", "The sensor's own frames received"),
    EVENTS_OUTSIDE_SENSOR(Scope.SENSOR, "afterglow.ingest.events.outside", "Events dropped: pixel outside the sensor"),
    EVENTS_LATE(Scope.SENSOR, "afterglow.ingest.events.late", "Events dropped: older than the last published frame (time going backwards)"),
    PACKETS_MALFORMED(Scope.SENSOR, "afterglow.ingest.packets.malformed", "Packets rejected: byte length does not match event count, too many events, or a time base out of range"),
    PACKETS_SHED_LATENCY(Scope.SENSOR, "afterglow.shed.latency.packets", "Packets shed because processing lagged arrival by more than the latency budget"),
    EVENTS_SHED_LATENCY(Scope.SENSOR, "afterglow.shed.latency.events", "Events in packets shed for the latency budget"),
    PACKETS_SHED_QUEUE(Scope.SENSOR, "afterglow.shed.queue.packets", "Packets shed because the sensor's pending-packet queue was full"),
    EVENTS_SHED_QUEUE(Scope.SENSOR, "afterglow.shed.queue.events", "Events in packets shed for a full queue"),
    UDP_LOST(Scope.SENSOR, "afterglow.ingest.udp.lost.packets", "UDP packets missing from the sequence (may arrive later)"),
    UDP_REORDERED(Scope.SENSOR, "afterglow.ingest.udp.reordered.packets", "UDP packets that arrived after a later one"),
    UDP_DUPLICATE(Scope.SENSOR, "afterglow.ingest.udp.duplicate.packets", "UDP packets seen twice (dropped)"),
    UDP_RESYNCS(Scope.SENSOR, "afterglow.ingest.udp.resyncs", "UDP sequence windows restarted after a run of packets out of step (the sender renumbered)"),
    SENSOR_FRAMES_REJECTED(Scope.SENSOR, "afterglow.ingest.sensor.frames.rejected", "Sensor frames rejected: wrong geometry or size, bit depth, or time off the sensor's timeline"),
    UDP_LATE(Scope.SENSOR, "afterglow.ingest.udp.late.packets", "UDP packets dropped because they arrived too late to apply in order"),
    CLOCK_RESTARTS(Scope.SENSOR, "afterglow.ingest.clock.restarts", "Sensor clock restarted or jumped (a run of consistent packets off the old timeline); the sensor's state was reset"),
    CLOCK_REANCHORS(Scope.SENSOR, "afterglow.ingest.clock.reanchors", "Clock mapping started again after a run of consistent packets ahead of it (less than a restart); the sensor's state was kept"),
    PACKETS_FUTURE(Scope.SENSOR, "afterglow.ingest.packets.future", "Packets rejected: newest event too far ahead of the sensor's timeline"),
    PACKETS_PAST(Scope.SENSOR, "afterglow.ingest.packets.past", "Packets rejected: all events far behind the sensor's timeline (and not a confirmed clock restart)"),
    PIPELINE_FAILURES(Scope.SENSOR, "afterglow.pipeline.failures", "Unexpected errors while handling this sensor; its state was reset and it carried on"),
    PIPELINE_STALLS(Scope.SENSOR, "afterglow.pipeline.stalls", "Times the watchdog found this sensor's pipeline with work and no progress"),
    FRAMES_SKIPPED(Scope.SENSOR, "afterglow.frames.skipped", "Frame times skipped because they were already older than the latency budget when due"),
    FRAMES_PUBLISHED(Scope.SENSOR, "afterglow.frames.published", "Frames read out and offered to subscribers"),
    FRAMES_UNREAD(Scope.SENSOR, "afterglow.frames.unread", "Frame times that passed with no sink wanting them (no subscriber or live view page, and not on the frame topic's rate), so nothing was read out"),
    RECORDED_MESSAGES(Scope.SENSOR, "afterglow.recording.messages", "Messages (hello, event packets, sensor frames) written to the sensor's recording"),
    RECORDING_DROPPED(Scope.SENSOR, "afterglow.recording.dropped.messages", "Messages not recorded: the recording queue was full or the recording had failed"),
    RECORDING_FAILURES(Scope.SENSOR, "afterglow.recording.failures", "Recordings stopped by a write error (disk full, file system error); live processing goes on"),
    INFERENCES(Scope.SENSOR, "afterglow.inference.runs", "Model inferences run by a learned reconstruction (one per window of sensor time, at readouts or while events arrive)"),
    INFERENCE_REPEATS(Scope.SENSOR, "afterglow.inference.repeats", "Frames of a learned reconstruction that repeated the last inference's output (inference rate below the frame rate)"),
    FRAMES_MISSED(Scope.SENSOR, "afterglow.frames.missed", "Frames a subscriber missed because it could not keep up"),
    LIVE_FRAMES_SENT(Scope.SENSOR, "afterglow.live.frames.sent", "Frames sent to live view pages (WebSocket)"),
    LIVE_FRAMES_SKIPPED(Scope.SENSOR, "afterglow.live.frames.skipped", "Live view frames skipped because the page's connection was not writable (latest wins)"),
    MESSAGES_MALFORMED(Scope.NODE, "afterglow.ingest.malformed.messages", "Messages or datagrams that are not valid envelopes"),
    MESSAGES_OVERSIZED(Scope.NODE, "afterglow.ingest.oversized.messages", "TCP messages whose length prefix exceeds the limit (connection closed)"),
    STREAMS_TRUNCATED(Scope.NODE, "afterglow.ingest.truncated.streams", "TCP streams that ended inside a message"),
    PROTOCOL_ERRORS(Scope.NODE, "afterglow.ingest.protocol.errors", "Messages out of protocol order (e.g. events before hello)"),
    UNKNOWN_SENSOR(Scope.NODE, "afterglow.ingest.unknown.sensor", "Messages or connections for a sensor the node does not accept"),
    GEOMETRY_MISMATCH(Scope.NODE, "afterglow.ingest.geometry.mismatch", "Hellos or frames whose geometry differs from the sensor's"),
    SUBSCRIBERS_REJECTED(Scope.NODE, "afterglow.subscribers.rejected", "Subscriber connections refused (bad request or limit)"),
    SUBSCRIBER_FAILURES(Scope.NODE, "afterglow.subscriber.failures", "Unexpected errors while serving one subscriber; that subscriber was dropped"),
    SUBSCRIBERS_DROPPED(Scope.NODE, "afterglow.subscribers.dropped", "Subscribers disconnected for not reading (stall timeout, or frame buffer budget)"),
    AUTH_REFUSED(Scope.NODE, "afterglow.auth.refused", "Hellos or subscriptions refused for a wrong or missing token"),
    UDP_REFUSED(Scope.NODE, "afterglow.ingest.udp.refused", "Datagrams refused: bad seal, unsealed for a sensor with a token or connected over TCP, or from a source not allowed"),
    DUPLICATE_SENSOR(Scope.NODE, "afterglow.ingest.duplicate.sensor", "Hellos for a sensor that is already connected, refused"),
    SENSORS_REFUSED(Scope.NODE, "afterglow.sensors.refused", "Hellos refused by the sensor count, pixel or memory limit, or because the sensor's chain could not be built"),
    SENSORS_EVICTED(Scope.NODE, "afterglow.sensors.evicted", "Unlisted sensors forgotten after being idle"),
    CONNECTIONS_REFUSED(Scope.NODE, "afterglow.connections.refused", "Connections refused: too many from one address"),
    CONNECTIONS_TIMED_OUT(Scope.NODE, "afterglow.connections.timed.out", "Connections closed for a hello, message, request or idle timeout"),
    ORIGIN_REFUSED(Scope.NODE, "afterglow.http.origin.refused", "Browser requests refused for a foreign Origin"),
    INTERNAL_ERRORS(Scope.NODE, "afterglow.internal.errors", "Unexpected exceptions caught by a handler (a bug; the loop keeps running)"),
    KAFKA_REBALANCES(Scope.NODE, "afterglow.kafka.rebalances", "Partition assignments of the event topic that changed this node's share (sensors moved in or out)"),
    KAFKA_RECORDS_MALFORMED(Scope.NODE, "afterglow.kafka.malformed.records", "Event-topic records refused: no key, a key that is not a sensor id, too large, not an envelope, or a key that differs from the sensor in the message"),
    KAFKA_SKIPPED_AT_ASSIGN(Scope.NODE, "afterglow.kafka.skipped.at.assign.records", "Event-topic records passed over when a partition was taken over: older than every sensor's latency budget plus the transit allowance"),
    KAFKA_RECORDS_UNATTACHED(Scope.NODE, "afterglow.kafka.unattached.records", "Event-topic records of a sensor this node has not started: no hello seen yet (hellos repeat), or its hello was refused"),
    KAFKA_ERRORS(Scope.NODE, "afterglow.kafka.errors", "Kafka client errors: failed commits, polls or sends that the node retried or gave up"),
    TLS_HANDSHAKE_FAILURES(Scope.NODE, "afterglow.tls.handshake.failures", "TLS handshakes that failed (not TLS, timeout, untrusted or missing client certificate, client aborted); connection closed");

    /** Where a counter lives. */
    public enum Scope {
        /** One per sensor. */
        SENSOR,
        /** One per node. */
        NODE
    }

    private final Scope scope;
    private final String meterName;
    private final String help;

    NodeCounter(Scope scope, String meterName, String help) {
        this.scope = scope;
        this.meterName = meterName;
        this.help = help;
    }

    public Scope scope() {
        return scope;
    }

    /** Dotted meter name; the Prometheus exporter turns it into snake case with a unit and {@code _total}. */
    public String meterName() {
        return meterName;
    }

    public String help() {
        return help;
    }
}
