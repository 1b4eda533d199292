package dev.afterglow.node.fleet;

import dev.afterglow.node.config.ConfigException;
import dev.afterglow.node.config.KafkaConfig;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.consumer.CooperativeStickyAssignor;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;

/**
 * Makes the node's Kafka clients from its configuration: the settings the node's guarantees need,
 * then the user's pass-through client properties (security, buffers), and checks at start that
 * the broker answers and the topics exist, so a wrong setting is a clear start-up error.
 */
final class KafkaClients {
    private KafkaClients() {
    }

    /** @param clientId the client's name at the broker (role and member name) */
    private static Properties base(KafkaConfig c, String clientId) {
        Properties p = new Properties();
        p.putAll(c.clientProperties);
        p.put("bootstrap.servers", c.bootstrapServers);
        p.put("client.id", clientId);
        return p;
    }

    /**
     * A producer that never blocks its caller (an ingest or pipeline thread): a full buffer fails
     * the send at once (counted as dropped). Idempotent, so retries keep one sensor's order.
     */
    static KafkaProducer<byte[], byte[]> producer(KafkaConfig c, String role, String member) {
        Properties p = base(c, "afterglow-" + role + "-" + member);
        p.putIfAbsent("linger.ms", "5"); // fewer, larger requests: the broker's cost is per request as much as per byte
        p.putIfAbsent("batch.size", String.valueOf(1 << 20));
        p.putIfAbsent("buffer.memory", String.valueOf(64L << 20));
        p.putIfAbsent("max.request.size", String.valueOf(Math.max(c.maxRecordBytes + 1024, 1 << 20)));
        p.putIfAbsent("acks", "all");
        p.put("max.block.ms", "0");
        return new KafkaProducer<>(p, new ByteArraySerializer(), new ByteArraySerializer());
    }

    /** The processing group's consumer: manual commits, cooperative rebalancing, the configured session timeout. */
    static KafkaConsumer<byte[], byte[]> consumer(KafkaConfig c, String member) {
        Properties p = base(c, "afterglow-" + member);
        p.putIfAbsent("auto.offset.reset", "earliest");
        p.putIfAbsent("max.partition.fetch.bytes", String.valueOf(Math.max(c.maxRecordBytes + 1024, 8 << 20)));
        p.putIfAbsent("fetch.max.bytes", String.valueOf(64 << 20));
        // Fetches wait for 256 KiB or 10 ms, whichever comes first: thousands of tiny fetches a
        // second cost the broker and this node more CPU than the data (10 ms of latency at most).
        p.putIfAbsent("fetch.min.bytes", String.valueOf(256 << 10));
        p.putIfAbsent("fetch.max.wait.ms", "10");
        p.put("group.id", c.group);
        p.put("enable.auto.commit", "false");
        p.put("partition.assignment.strategy", CooperativeStickyAssignor.class.getName());
        p.put("session.timeout.ms", String.valueOf(c.sessionTimeoutMs));
        p.put("heartbeat.interval.ms", String.valueOf(c.heartbeatIntervalMs));
        p.put("isolation.level", "read_uncommitted");
        return new KafkaConsumer<>(p, new ByteArrayDeserializer(), new ByteArrayDeserializer());
    }

    /** Checks that the broker answers within 15 s and that {@code topics} exist; throws a {@link ConfigException} naming what is wrong. */
    static void checkTopics(KafkaConfig c, Set<String> topics, String member) {
        Properties p = base(c, "afterglow-admin-" + member);
        p.put("request.timeout.ms", "10000");
        p.put("default.api.timeout.ms", "15000");
        try (Admin admin = Admin.create(p)) {
            Map<String, ?> found = admin.listTopics().names().get(15, TimeUnit.SECONDS).stream()
                    .collect(java.util.stream.Collectors.toMap(t -> t, t -> t));
            List<String> missing = topics.stream().filter(t -> !found.containsKey(t)).sorted().toList();
            if (!missing.isEmpty()) {
                throw new ConfigException("kafka: topic(s) " + missing + " do not exist on " + c.bootstrapServers
                        + "; create them (partitions = the most nodes you will run in the group) before starting");
            }
        } catch (TimeoutException e) {
            throw new ConfigException("kafka: no answer from bootstrap-servers " + c.bootstrapServers + " within 15 s", e);
        } catch (ExecutionException e) {
            throw new ConfigException("kafka: bootstrap-servers " + c.bootstrapServers + ": " + e.getCause(), e);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new ConfigException("kafka: interrupted while checking topics", e);
        }
    }

    /**
     * Waits (at start, up to 15 s) until the producer knows the topic's partitions, so that its
     * first sends do not fail for want of metadata (it never waits once running).
     */
    static void awaitMetadata(KafkaProducer<byte[], byte[]> producer, String topic) {
        long deadline = System.nanoTime() + 15_000_000_000L;
        while (true) {
            try {
                if (!producer.partitionsFor(topic).isEmpty()) {
                    return;
                }
            } catch (org.apache.kafka.common.errors.TimeoutException e) {
                // metadata requested; not here yet
            }
            if (System.nanoTime() > deadline) {
                throw new ConfigException("kafka: no metadata for topic " + topic + " within 15 s");
            }
            try {
                Thread.sleep(50);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                throw new ConfigException("kafka: interrupted while waiting for metadata", e);
            }
        }
    }
}
