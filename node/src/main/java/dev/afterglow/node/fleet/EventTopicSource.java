package dev.afterglow.node.fleet;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.node.config.KafkaConfig;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.pipeline.Transport;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.OptionalLong;
import java.util.Set;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.WakeupException;

/**
 * A processing-group member's source: one thread polls the event topic for the partitions the
 * group gave this node, starts each sensor at its hello (through the registry, with the same
 * checks as a TCP hello) and hands its packets and frames to its pipeline, in partition order.
 *
 * <p>Offsets of the records handed to pipelines are committed every {@code commit-interval-ms}
 * with metadata {@code afterglow;member=NAME;clean=0;t=WALL_MS}, and once more with
 * {@code clean=1} when partitions are revoked or the node stops. A node that gets a partition
 * whose last commit is not clean and not its own knows the previous owner died within one commit
 * interval (plus a poll) of {@code t}: records up to then may have been applied there already, and
 * are counted as re-read (an upper bound); records after it cannot have been.
 *
 * <p>A sensor starts at its hello, or at its first record if this node knows it already (listed).
 *
 * <p>Bounded latency: a record older than the sensor's latency budget plus
 * {@code transit-allowance-ms} when read is skipped (counted), so a node that fell behind, or
 * took a sensor over after a failure, skips ahead to live data. Hellos are never skipped one by
 * one; a partition taken over with a backlog older than every budget is passed over at once.
 */
public final class EventTopicSource implements ConsumerRebalanceListener, AutoCloseable {
    private static final long REREAD_SLACK_MS = 500;
    /** Rebalances are rare and worth a line each (operators match them with the rebalance counter). */
    private static final System.Logger LOG = System.getLogger(EventTopicSource.class.getPackageName());

    private final KafkaConfig config;
    private final SensorRegistry registry;
    private final NodeClock clock;
    private final Counters nodeCounters;
    private final String member;
    private final KafkaConsumer<byte[], byte[]> consumer;
    private final Thread thread;
    private volatile boolean closing;

    // Consumer thread only:
    private final Map<TopicPartition, Long> handed = new HashMap<>();
    private final Map<TopicPartition, Set<String>> sensorsOf = new HashMap<>();
    private final Map<String, SensorPipeline> started = new HashMap<>();
    private final Map<TopicPartition, Long> rereadUntilMs = new HashMap<>();
    private long lastCommitNanos;
    private long lastLagNanos;

    private volatile int partitionsOwned;
    private volatile long lagRecords;
    private volatile long rebalances;

    /** @param member this node's name in the group (commit metadata) */
    EventTopicSource(KafkaConfig config, String member, SensorRegistry registry, NodeClock clock, Counters nodeCounters) {
        this.config = config;
        this.registry = registry;
        this.clock = clock;
        this.nodeCounters = nodeCounters;
        this.member = member;
        this.consumer = KafkaClients.consumer(config, member);
        this.thread = new Thread(this::run, "afterglow-kafka-source");
        this.thread.setDaemon(true);
    }

    void start() {
        thread.start();
    }

    /** Partitions of the event topic this node owns now. Any thread. */
    public int partitionsOwned() {
        return partitionsOwned;
    }

    /** Records in owned partitions not yet read (as of the last poll, refreshed about every 500 ms). Any thread. */
    public long lagRecords() {
        return lagRecords;
    }

    private void run() {
        try {
            consumer.subscribe(List.of(config.eventTopic), this);
            while (!closing) {
                try {
                    ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(100));
                    long arrival = clock.monotonicNanos();
                    long wallMs = clock.wallNanos() / 1_000_000L;
                    for (ConsumerRecord<byte[], byte[]> r : records) {
                        try {
                            handle(r, arrival, wallMs);
                        } catch (RuntimeException e) { // one bad record costs that record, not the rest of the poll
                            nodeCounters.increment(NodeCounter.INTERNAL_ERRORS);
                            OnceLog.warn("kafka-record:" + e.getClass().getName(), "event topic " + r.topic() + "-"
                                    + r.partition() + " offset " + r.offset() + ": record skipped after an unexpected error: " + e, e);
                        }
                    }
                    long now = System.nanoTime();
                    if (now - lastCommitNanos >= config.commitIntervalMs * 1_000_000L) {
                        lastCommitNanos = now;
                        commitAsync();
                    }
                    if (now - lastLagNanos >= 500_000_000L) {
                        lastLagNanos = now;
                        updateLag();
                    }
                } catch (WakeupException e) {
                    if (!closing) {
                        throw e;
                    }
                } catch (RuntimeException e) {
                    nodeCounters.increment(NodeCounter.KAFKA_ERRORS);
                    OnceLog.warn("kafka-source:" + e.getClass().getName(), "event topic: " + e + " (retrying)", e);
                    sleepQuietly(200);
                }
            }
        } finally {
            try {
                commitSync(handed.keySet(), true);
            } catch (RuntimeException e) {
                nodeCounters.increment(NodeCounter.KAFKA_ERRORS);
            }
            for (String id : started.keySet()) {
                registry.detachFromBus(id);
            }
            consumer.close(Duration.ofSeconds(5));
        }
    }

    private void handle(ConsumerRecord<byte[], byte[]> r, long arrival, long wallMs) {
        TopicPartition tp = new TopicPartition(r.topic(), r.partition());
        handed.put(tp, r.offset() + 1);
        String id = EventRecords.sensorId(r.key());
        byte[] value = r.value();
        if (id == null || value == null || value.length > config.maxRecordBytes) {
            malformed(tp, r.offset(), "no sensor id as key, no value, or a value above max-record-bytes");
            return;
        }
        Envelope envelope;
        try {
            envelope = Envelopes.parse(com.google.protobuf.UnsafeByteOperations.unsafeWrap(value)); // the record owns its bytes: alias them
        } catch (InvalidProtocolBufferException e) {
            malformed(tp, r.offset(), "not an envelope");
            return;
        }
        if (envelope.getSchemaVersion() != Envelopes.SCHEMA_VERSION || !id.equals(EventRecords.sensorIdInside(envelope))) {
            malformed(tp, r.offset(), "schema version " + envelope.getSchemaVersion() + ", or a message of another sensor or kind");
            return;
        }
        if (envelope.getBodyCase() == Envelope.BodyCase.HELLO) {
            onHello(tp, id, envelope, arrival);
            return;
        }
        SensorPipeline p = started.get(id);
        if (p == null) {
            p = startKnown(tp, id, arrival);
        }
        if (p == null) {
            nodeCounters.increment(NodeCounter.KAFKA_RECORDS_UNATTACHED);
            return;
        }
        long events = envelope.getBodyCase() == Envelope.BodyCase.EVENTS
                ? envelope.getEvents().getEvents().size() / EventPacketCodec.BYTES_PER_EVENT : 0;
        long maxAgeMs = Math.round(p.config().latencyBudgetMs) + config.transitAllowanceMs;
        if (wallMs - r.timestamp() > maxAgeMs) {
            p.counters().increment(NodeCounter.KAFKA_SKIPPED_RECORDS);
            p.counters().add(NodeCounter.KAFKA_SKIPPED_EVENTS, events);
            return;
        }
        Long rereadUntil = rereadUntilMs.get(tp);
        if (rereadUntil != null) {
            if (r.timestamp() <= rereadUntil) {
                p.counters().increment(NodeCounter.KAFKA_REREAD_RECORDS);
                p.counters().add(NodeCounter.KAFKA_REREAD_EVENTS, events);
            } else {
                rereadUntilMs.remove(tp);
            }
        }
        if (envelope.getBodyCase() == Envelope.BodyCase.EVENTS) {
            p.events(envelope, arrival, Transport.KAFKA);
        } else {
            p.sensorFrame(envelope, arrival);
        }
    }

    private void onHello(TopicPartition tp, String id, Envelope envelope, long arrival) {
        if (!started.containsKey(id)) { // else a repeated hello: the sensor runs already
            start(tp, id, envelope.getHello(), arrival);
        }
    }

    /**
     * A sensor this node already knows (listed in its configuration, or started here before) needs
     * no hello to start mid-stream: its settings give its geometry. The topic is trusted as far as
     * its ACLs go, as for every record after a hello.
     */
    private SensorPipeline startKnown(TopicPartition tp, String id, long arrival) {
        SensorPipeline known = registry.get(id);
        if (known == null) {
            return null;
        }
        SensorHello hello = known.configHello();
        if (known.config().hasToken()) {
            hello = hello.toBuilder().setToken(known.config().token).build();
        }
        return start(tp, id, hello, arrival);
    }

    private SensorPipeline start(TopicPartition tp, String id, SensorHello hello, long arrival) {
        SensorRegistry.Attach attach = registry.attachFromBus(hello);
        if (attach.pipeline() == null) {
            nodeCounters.increment(NodeCounter.KAFKA_RECORDS_UNATTACHED);
            OnceLog.warn("kafka-hello-refused", "sensor " + id + " on " + tp + " refused: " + attach.errorCode() + ": "
                    + attach.message(), null);
            return null;
        }
        started.put(id, attach.pipeline());
        sensorsOf.computeIfAbsent(tp, k -> new HashSet<>()).add(id);
        attach.pipeline().hello(hello, arrival);
        return attach.pipeline();
    }

    private void malformed(TopicPartition tp, long offset, String why) {
        nodeCounters.increment(NodeCounter.KAFKA_RECORDS_MALFORMED);
        OnceLog.warn("kafka-malformed", "event topic " + tp + " offset " + offset + ": record refused: " + why, null);
    }

    private Map<TopicPartition, OffsetAndMetadata> offsets(Collection<TopicPartition> parts, boolean clean) {
        String meta = "afterglow;member=" + member + ";clean=" + (clean ? 1 : 0) + ";t=" + clock.wallNanos() / 1_000_000L;
        Map<TopicPartition, OffsetAndMetadata> out = new HashMap<>();
        for (TopicPartition tp : parts) {
            Long next = handed.get(tp);
            if (next != null) {
                out.put(tp, new OffsetAndMetadata(next, meta));
            }
        }
        return out;
    }

    /** Commits every owned partition read so far, also when nothing new came: a fresh {@code t} bounds re-reads after a crash. */
    private void commitAsync() {
        Map<TopicPartition, OffsetAndMetadata> o = offsets(handed.keySet(), false);
        if (!o.isEmpty()) {
            consumer.commitAsync(o, (offsets, e) -> {
                if (e != null) {
                    nodeCounters.increment(NodeCounter.KAFKA_ERRORS);
                    OnceLog.warn("kafka-commit:" + e.getClass().getName(), "event topic: commit failed: " + e, null);
                }
            });
        }
    }

    private void commitSync(Collection<TopicPartition> parts, boolean clean) {
        Map<TopicPartition, OffsetAndMetadata> o = offsets(parts, clean);
        if (!o.isEmpty()) {
            consumer.commitSync(o, Duration.ofSeconds(5));
        }
    }

    private void updateLag() {
        long lag = 0;
        for (TopicPartition tp : consumer.assignment()) {
            OptionalLong l = consumer.currentLag(tp);
            if (l.isPresent()) {
                lag += l.getAsLong();
            }
        }
        lagRecords = lag;
    }

    @Override
    public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
        try {
            commitSync(partitions, true);
        } catch (RuntimeException e) {
            nodeCounters.increment(NodeCounter.KAFKA_ERRORS);
            OnceLog.warn("kafka-revoke:" + e.getClass().getName(), "event topic: commit at hand-over failed: " + e, null);
        }
        release(partitions);
    }

    @Override
    public void onPartitionsLost(Collection<TopicPartition> partitions) {
        release(partitions); // another member owns them already: committing now would overwrite its progress
    }

    private void release(Collection<TopicPartition> partitions) {
        if (partitions.isEmpty()) {
            return;
        }
        for (TopicPartition tp : partitions) {
            handed.remove(tp);
            rereadUntilMs.remove(tp);
            Set<String> ids = sensorsOf.remove(tp);
            if (ids != null) {
                for (String id : ids) {
                    started.remove(id);
                    registry.detachFromBus(id);
                }
            }
        }
        partitionsOwned = consumer.assignment().size() - countIn(partitions);
        nodeCounters.increment(NodeCounter.KAFKA_REBALANCES);
        LOG.log(System.Logger.Level.INFO, "event topic: handed over " + partitions);
    }

    private int countIn(Collection<TopicPartition> partitions) {
        int n = 0;
        for (TopicPartition tp : consumer.assignment()) {
            if (partitions.contains(tp)) {
                n++;
            }
        }
        return n;
    }

    @Override
    public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
        if (partitions.isEmpty()) {
            partitionsOwned = consumer.assignment().size();
            return;
        }
        nodeCounters.increment(NodeCounter.KAFKA_REBALANCES);
        Map<TopicPartition, OffsetAndMetadata> committed = consumer.committed(new HashSet<>(partitions), Duration.ofSeconds(5));
        List<String> unclean = new ArrayList<>();
        for (TopicPartition tp : partitions) {
            OffsetAndMetadata om = committed.get(tp);
            Long until = om == null ? null
                    : uncleanUntil(om.metadata(), member, config.commitIntervalMs, clock.wallNanos() / 1_000_000L);
            if (until != null) {
                rereadUntilMs.put(tp, until);
                unclean.add(tp.toString());
            }
        }
        long skipped = skipStaleBacklog(partitions, committed);
        partitionsOwned = consumer.assignment().size(); // once they are ready to read
        LOG.log(System.Logger.Level.INFO, "event topic: took over " + partitions
                + (unclean.isEmpty() ? "" : "; previous owner stopped uncleanly on " + unclean)
                + (skipped == 0 ? "" : "; skipped " + skipped + " records older than the latency budget"));
    }

    /**
     * A partition taken over far behind its end (a member started after an outage, or a new group
     * on a topic that keeps days of data) would be read record by record only to skip every one
     * for its age. Instead the position moves at once to the first record younger than the
     * largest latency budget plus the transit allowance (Kafka's time index,
     * {@code offsetsForTimes}); what it passes over is counted. Hellos passed over repeat.
     */
    private long skipStaleBacklog(Collection<TopicPartition> partitions, Map<TopicPartition, OffsetAndMetadata> committed) {
        long horizonMs = clock.wallNanos() / 1_000_000L - Math.round(registry.maxLatencyBudgetMs()) - config.transitAllowanceMs;
        Map<TopicPartition, Long> query = new HashMap<>();
        for (TopicPartition tp : partitions) {
            query.put(tp, horizonMs);
        }
        Map<TopicPartition, org.apache.kafka.clients.consumer.OffsetAndTimestamp> young =
                consumer.offsetsForTimes(query, Duration.ofSeconds(5));
        Map<TopicPartition, Long> ends = consumer.endOffsets(partitions, Duration.ofSeconds(5));
        Map<TopicPartition, Long> starts = consumer.beginningOffsets(partitions, Duration.ofSeconds(5));
        long skipped = 0;
        for (TopicPartition tp : partitions) {
            OffsetAndMetadata om = committed.get(tp);
            long from = om != null ? om.offset() : starts.getOrDefault(tp, 0L);
            org.apache.kafka.clients.consumer.OffsetAndTimestamp y = young.get(tp);
            long to = y != null ? y.offset() : ends.getOrDefault(tp, from); // none younger: all of it is stale
            if (to > from) {
                consumer.seek(tp, to);
                skipped += to - from;
            }
        }
        nodeCounters.add(NodeCounter.KAFKA_SKIPPED_AT_ASSIGN, skipped);
        return skipped;
    }

    /**
     * From a commit's metadata (written by whoever may commit for the group: untrusted): if another
     * member committed it and did not hand over cleanly, until when (wall ms) it may have applied
     * records; null otherwise or if the metadata does not parse. A commit time after {@code nowMs}
     * (a skewed clock, or a made-up number) counts as now: the dead member cannot have applied a
     * record that arrives later, and the sum cannot overflow.
     */
    static Long uncleanUntil(String metadata, String self, long commitIntervalMs, long nowMs) {
        if (metadata == null || !metadata.startsWith("afterglow;")) {
            return null;
        }
        String owner = null;
        boolean clean = true;
        long t = -1;
        for (String part : metadata.split(";")) {
            if (part.startsWith("member=")) {
                owner = part.substring(7);
            } else if (part.equals("clean=0")) {
                clean = false;
            } else if (part.startsWith("t=")) {
                try {
                    t = Long.parseLong(part.substring(2));
                } catch (NumberFormatException e) {
                    return null;
                }
            }
        }
        if (clean || owner == null || owner.equals(self) || t < 0) {
            return null;
        }
        return Math.min(t, nowMs) + commitIntervalMs + 100 + REREAD_SLACK_MS;
    }

    private static void sleepQuietly(long ms) {
        try {
            Thread.sleep(ms);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }

    @Override
    public void close() {
        closing = true;
        consumer.wakeup();
        try {
            thread.join(10_000);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }
}
