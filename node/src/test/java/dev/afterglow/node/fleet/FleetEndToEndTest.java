package dev.afterglow.node.fleet;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.ConfigException;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.e2e.SceneEvents;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.function.BooleanSupplier;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Nodes in a processing group on a real Kafka broker (KRaft, in this JVM, loopback): every event
 * of every sensor is read exactly once across the group, also when members join and leave; a
 * Kafka-fed node publishes the frames a TCP-fed node publishes, bit for bit; an edge forwards
 * what its sensors send; hostile records cost nothing but a count.
 */
@Timeout(value = 180, unit = TimeUnit.SECONDS)
class FleetEndToEndTest {
    static final int W = 64;
    static final int H = 48;
    static final String CHAIN = "refractory(period=100us) | high-pass(cutoff=5rad/s, contrast=0.2)";
    @TempDir
    static Path dir;
    static KafkaTestBroker broker;
    private static int topics;

    @BeforeAll
    static void startBroker() throws Exception {
        broker = KafkaTestBroker.start(dir);
    }

    @AfterAll
    static void stopBroker() {
        if (broker != null) {
            broker.close();
        }
    }

    /** Fresh event and frame topics for one test (4 partitions each). */
    static String[] newTopics() throws Exception {
        int n = ++topics;
        String events = "events-" + n;
        String frames = "frames-" + n;
        try (Admin admin = Admin.create(Map.of("bootstrap.servers", broker.bootstrap()))) {
            admin.createTopics(List.of(new NewTopic(events, 4, (short) 1), new NewTopic(frames, 4, (short) 1))).all().get();
        }
        return new String[] {events, frames};
    }

    static String sensorList(List<String> ids, double budgetMs) {
        StringBuilder b = new StringBuilder();
        for (String id : ids) {
            b.append("  - {id: ").append(id).append(", width: ").append(W).append(", height: ").append(H)
                    .append(", frame-rate-hz: 50, latency-budget-ms: ").append(budgetMs).append(", chain: '").append(CHAIN)
                    .append("'}\n");
        }
        return b.toString();
    }

    static NodeConfig member(String name, String[] topic, String group, List<String> sensors, double budgetMs) {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: 0, http-port: -1}
                warm-up: false
                limits: {max-pending-packets: 60000, max-pending-bytes: 1000000000}
                kafka:
                  bootstrap-servers: "%s"
                  consume: true
                  group: %s
                  member-name: %s
                  event-topic: %s
                  frame-topic: %s
                  frame-format: log-f32
                  commit-interval-ms: 100
                  session-timeout-ms: 2000
                  heartbeat-interval-ms: 300
                sensors:
                %s""".formatted(broker.bootstrap(), group, name, topic[0], topic[1], sensorList(sensors, budgetMs)), name);
    }

    static long sensorSum(List<AfterglowNode> nodes, String id, NodeCounter c) {
        long sum = 0;
        for (AfterglowNode n : nodes) {
            var p = n.sensors().get(id);
            if (p != null) {
                sum += p.counters().get(c);
            }
        }
        return sum;
    }

    static int owned(AfterglowNode n) {
        return n.fleet().source().partitionsOwned();
    }

    static void waitFor(String what, long seconds, BooleanSupplier condition) throws InterruptedException {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(seconds);
        while (!condition.getAsBoolean()) {
            if (System.nanoTime() > deadline) {
                throw new AssertionError(what + ": not within " + seconds + " s");
            }
            Thread.sleep(20);
        }
    }

    /** Packets of one sensor's scene, {@code seconds} long, 1 ms each. */
    static List<EventBatch> scene(long seed, double seconds) {
        return SceneEvents.packets(W, H, (long) (seconds * 1e6), 1_000, seed);
    }

    static long events(List<EventBatch> packets) {
        long n = 0;
        for (EventBatch b : packets) {
            n += b.size;
        }
        return n;
    }

    @Test
    void everyEventIsReadExactlyOnceAcrossTheGroupAsMembersJoinAndLeave() throws Exception {
        String[] topic = newTopics();
        List<String> ids = List.of("cam-a", "cam-b", "cam-c", "cam-d", "cam-e", "cam-f");
        Map<String, List<EventBatch>> scenes = new HashMap<>();
        long seed = 1;
        for (String id : ids) {
            scenes.put(id, scene(seed++, 3.0));
        }
        List<AfterglowNode> nodes = new ArrayList<>();
        try (TopicSensor sensors = new TopicSensor(broker.bootstrap(), topic[0])) {
            AfterglowNode a = AfterglowNode.start(member("a", topic, "g1", ids, 10_000));
            nodes.add(a);
            waitFor("a owns every partition", 30, () -> owned(a) == 4);
            // A third of every sensor's packets with one member, a third with two, a third after the first left.
            int[] next = new int[ids.size()];
            sendThird(sensors, ids, scenes, next, 1);
            AfterglowNode b = AfterglowNode.start(member("b", topic, "g1", ids, 10_000));
            nodes.add(b);
            waitFor("b takes a share", 30, () -> owned(b) > 0 && owned(a) + owned(b) == 4);
            sendThird(sensors, ids, scenes, next, 2);
            waitFor("the second third applied", 30, () -> ids.stream().allMatch(id ->
                    sensorSum(nodes, id, NodeCounter.EVENTS_KAFKA) == eventsUpTo(scenes.get(id), next[ids.indexOf(id)])));
            a.close();
            waitFor("b owns every partition", 30, () -> owned(b) == 4);
            sendThird(sensors, ids, scenes, next, 3);
            for (String id : ids) {
                long sent = events(scenes.get(id));
                waitFor(id + " complete", 30, () -> sensorSum(nodes, id, NodeCounter.EVENTS_KAFKA) == sent);
            }
            // Give any duplicate time to show up, then check the sums again.
            Thread.sleep(500);
            int moved = 0;
            for (String id : ids) {
                long sent = events(scenes.get(id));
                assertEquals(sent, sensorSum(nodes, id, NodeCounter.EVENTS_KAFKA), id + ": every event read once");
                assertEquals(sent, sensorSum(nodes, id, NodeCounter.EVENTS_RECEIVED), id + ": every event reached the chain");
                assertEquals(0, sensorSum(nodes, id, NodeCounter.KAFKA_SKIPPED_RECORDS), id);
                assertEquals(0, sensorSum(nodes, id, NodeCounter.KAFKA_REREAD_RECORDS), id + ": hand-overs were clean");
                if (a.sensors().get(id).counters().get(NodeCounter.EVENTS_KAFKA) > 0
                        && b.sensors().get(id).counters().get(NodeCounter.EVENTS_KAFKA) > 0) {
                    moved++;
                }
            }
            assertTrue(moved > 0, "some sensor moved between members");
            assertTrue(a.counters().get(NodeCounter.KAFKA_REBALANCES) >= 2, "a saw b join (and left)");
            assertEquals(0, b.counters().get(NodeCounter.KAFKA_RECORDS_MALFORMED));
        } finally {
            for (AfterglowNode n : nodes) {
                n.close();
            }
        }
    }

    private static void sendThird(TopicSensor sensors, List<String> ids, Map<String, List<EventBatch>> scenes, int[] next,
            int third) throws Exception {
        for (int i = 0; i < ids.size(); i++) {
            List<EventBatch> packets = scenes.get(ids.get(i));
            int end = third == 3 ? packets.size() : packets.size() * third / 3;
            for (; next[i] < end; next[i]++) {
                sensors.events(ids.get(i), next[i], packets.get(next[i]));
            }
        }
        sensors.flush();
    }

    private static long eventsUpTo(List<EventBatch> packets, int end) {
        long n = 0;
        for (int i = 0; i < end; i++) {
            n += packets.get(i).size;
        }
        return n;
    }

    @Test
    void framesOfAKafkaFedNodeEqualThoseOfADirectlyFedNode() throws Exception {
        String[] topic = newTopics();
        List<EventBatch> packets = scene(7, 1.5);
        int frames = 60; // 1.2 s at 50 Hz
        try (AfterglowNode viaKafka = AfterglowNode.start(member("k", topic, "g2", List.of("cam"), 5000));
                AfterglowNode direct = AfterglowNode.start(NodeConfig.parse("""
                        listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: -1}
                        warm-up: false
                        sensors:
                        %s""".formatted(sensorList(List.of("cam"), 5000)), "direct"));
                SubscriberClient fromKafka = SubscriberClient.connect("127.0.0.1", viaKafka.subscriberPort(), "cam", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32);
                SubscriberClient fromTcp = SubscriberClient.connect("127.0.0.1", direct.subscriberPort(), "cam", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32);
                TopicSensor topicSensor = new TopicSensor(broker.bootstrap(), topic[0]);
                SensorClient tcpSensor = SensorClient.connect("127.0.0.1", direct.ingestTcpPort(), "cam", W, H, false);
                KafkaConsumer<byte[], byte[]> frameTopic = frameConsumer(broker.bootstrap(), topic[1])) {
            fromKafka.setTimeoutMillis(20_000);
            fromTcp.setTimeoutMillis(20_000);
            waitFor("k owns every partition", 30, () -> owned(viaKafka) == 4);
            waitFor("subscribers", 10, () -> viaKafka.publisher().count() == 1 && direct.publisher().count() == 1);
            topicSensor.hello("cam", W, H);
            long start = System.nanoTime();
            long seq = 0;
            for (EventBatch b : packets) {
                SceneEvents.paceRealTime(start, b.timeBaseUs + 1_000);
                topicSensor.events("cam", seq++, b);
                tcpSensor.sendEvents(b);
                tcpSensor.flush();
            }
            topicSensor.flush();
            List<IntensityFrame> k = new ArrayList<>();
            List<IntensityFrame> d = new ArrayList<>();
            for (int i = 0; i < frames; i++) {
                k.add(fromKafka.next());
                d.add(fromTcp.next());
            }
            for (int i = 0; i < frames; i++) {
                assertEquals(d.get(i).getFrameTimeUs(), k.get(i).getFrameTimeUs(), "frame " + i);
                assertArrayEquals(d.get(i).getPixels().toByteArray(), k.get(i).getPixels().toByteArray(),
                        "frame " + i + " at " + d.get(i).getFrameTimeUs() + " us: Kafka-fed and TCP-fed differ");
            }
            assertTrue(events(packets) > 1000, "the scene has events");
            // The frame topic carries the same frames, with the node's name in a header.
            Map<Long, IntensityFrame> byTime = new HashMap<>();
            for (IntensityFrame f : k) {
                byTime.put(f.getFrameTimeUs(), f);
            }
            int matched = 0;
            long deadline = System.nanoTime() + 20_000_000_000L;
            while (matched < frames && System.nanoTime() < deadline) {
                for (ConsumerRecord<byte[], byte[]> r : frameTopic.poll(Duration.ofMillis(200))) {
                    assertEquals("cam", EventRecords.sensorId(r.key()));
                    assertEquals("k", new String(r.headers().lastHeader(EventRecords.MEMBER_HEADER).value()));
                    IntensityFrame f = Envelope.parseFrom(r.value()).getIntensityFrame();
                    IntensityFrame sub = byTime.get(f.getFrameTimeUs());
                    if (sub != null) {
                        assertEquals(sub.getPixels(), f.getPixels(), "frame topic at " + f.getFrameTimeUs());
                        matched++;
                    }
                }
            }
            assertEquals(frames, matched, "every subscriber frame is on the frame topic");
        }
    }

    static KafkaConsumer<byte[], byte[]> frameConsumer(String bootstrap, String topic) {
        KafkaConsumer<byte[], byte[]> c = new KafkaConsumer<>(Map.of("bootstrap.servers", bootstrap,
                "group.id", "frame-reader-" + topic, "auto.offset.reset", "earliest"),
                new ByteArrayDeserializer(), new ByteArrayDeserializer());
        c.subscribe(List.of(topic));
        return c;
    }

    @Test
    void anEdgeForwardsWhatItsSensorsSendAndAGroupMemberProcessesIt() throws Exception {
        String[] topic = newTopics();
        List<EventBatch> packets = scene(11, 1.0);
        NodeConfig edgeConfig = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: -1, http-port: -1}
                warm-up: false
                kafka: {bootstrap-servers: "%s", forward: true, event-topic: %s, hello-repeat-ms: 200}
                """.formatted(broker.bootstrap(), topic[0]), "edge");
        // The processing member lists no sensor: it starts the unlisted one at its forwarded hello.
        NodeConfig memberConfig = NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: 0, http-port: -1}
                warm-up: false
                limits: {max-pending-packets: 60000, max-pending-bytes: 1000000000}
                sensor-defaults: {latency-budget-ms: 10000, chain: '%s'}
                kafka: {bootstrap-servers: "%s", consume: true, group: g3, event-topic: %s}
                """.formatted(CHAIN, broker.bootstrap(), topic[0]), "member");
        try (AfterglowNode member = AfterglowNode.start(memberConfig); AfterglowNode edge = AfterglowNode.start(edgeConfig)) {
            waitFor("member owns every partition", 30, () -> owned(member) == 4);
            try (SensorClient sensor = SensorClient.connect("127.0.0.1", edge.ingestTcpPort(), "rover-cam", W, H, false)) {
                for (EventBatch b : packets) {
                    sensor.sendEvents(b);
                }
                sensor.flush();
                long sent = events(packets);
                waitFor("forwarded and applied", 30, () -> member.sensors().get("rover-cam") != null
                        && member.sensors().get("rover-cam").counters().get(NodeCounter.EVENTS_RECEIVED) == sent);
                Counters edgeSensor = edge.sensors().get("rover-cam").counters();
                waitFor("the edge counts its forwards", 10, () -> edgeSensor.get(NodeCounter.KAFKA_FORWARDED) >= packets.size() + 1);
                assertEquals(0, edgeSensor.get(NodeCounter.EVENTS_RECEIVED), "the edge does not process (process-forwarded: false)");
                assertEquals(0, edgeSensor.get(NodeCounter.KAFKA_FORWARD_DROPPED));
                waitFor("hellos repeat while the sensor sends", 10,
                        () -> edgeSensor.get(NodeCounter.KAFKA_FORWARDED) >= packets.size() + 2);
            }
        }
    }

    @Test
    void hostileRecordsAreCountedAndCostNothingElse() throws Exception {
        String[] topic = newTopics();
        List<EventBatch> packets = scene(13, 0.5);
        try (AfterglowNode node = AfterglowNode.start(member("h", topic, "g4", List.of("cam"), 10_000));
                TopicSensor sensors = new TopicSensor(broker.bootstrap(), topic[0])) {
            waitFor("owns every partition", 30, () -> owned(node) == 4);
            sensors.raw(null, new byte[] {1, 2, 3});                                      // no key
            sensors.raw("cam".getBytes(), new byte[] {(byte) 0xff, (byte) 0xff, 0x7f});  // not an envelope
            sensors.raw("not a sensor id!".getBytes(), new byte[0]);                      // key not an id
            sensors.raw("cam".getBytes(), null);                                          // tombstone
            // The key says cam, the message says another sensor: refused, or one producer could feed any sensor.
            sensors.send("cam", Envelope.newBuilder().setSchemaVersion(1)
                    .setEvents(SensorClient.packet("other", 0, packets.get(0))).build());
            // A hello the node cannot take (geometry far beyond its limits) for an unlisted sensor.
            sensors.send("huge", Envelope.newBuilder().setSchemaVersion(1)
                    .setHello(SensorClient.hello("huge", 1 << 16, 1 << 15, false, "")).build());
            long seq = 0;
            for (EventBatch b : packets) {
                sensors.events("cam", seq++, b);
            }
            sensors.flush();
            long sent = events(packets);
            waitFor("the good sensor's events all arrive", 30,
                    () -> node.sensors().get("cam").counters().get(NodeCounter.EVENTS_RECEIVED) == sent);
            waitFor("every bad record counted", 10, () -> node.counters().get(NodeCounter.KAFKA_RECORDS_MALFORMED) == 5);
            assertTrue(node.counters().get(NodeCounter.SENSORS_REFUSED) >= 1, "the oversized hello was refused");
            assertEquals(null, node.sensors().get("huge"));
            assertEquals(0, node.counters().get(NodeCounter.INTERNAL_ERRORS));
        }
    }

    @Test
    void aMemberThatFellBehindSkipsAheadAndCountsWhatItSkipped() throws Exception {
        String[] topic = newTopics();
        List<EventBatch> packets = scene(17, 1.0);
        int stale = packets.size() / 2;
        try (AfterglowNode node = AfterglowNode.start(member("s", topic, "g5", List.of("cam"), 50));
                TopicSensor sensors = new TopicSensor(broker.bootstrap(), topic[0])) {
            waitFor("owns every partition", 30, () -> owned(node) == 4);
            // The first half was made 10 s ago (a backlog, as after an outage); the rest is live.
            long tenSecondsAgo = System.currentTimeMillis() - 10_000;
            long staleEvents = 0;
            for (int i = 0; i < packets.size(); i++) {
                if (i < stale) {
                    sensors.eventsMadeAt("cam", i, packets.get(i), tenSecondsAgo);
                    staleEvents += packets.get(i).size;
                } else {
                    sensors.events("cam", i, packets.get(i));
                }
            }
            sensors.flush();
            long fresh = events(packets) - staleEvents;
            waitFor("the live half applied", 30, () -> node.sensors().get("cam").counters().get(NodeCounter.EVENTS_KAFKA) == fresh);
            Counters c = node.sensors().get("cam").counters();
            assertEquals(stale, c.get(NodeCounter.KAFKA_SKIPPED_RECORDS), "every record older than the budget skipped");
            assertEquals(staleEvents, c.get(NodeCounter.KAFKA_SKIPPED_EVENTS));
        }
    }

    @Test
    void aMissingTopicIsAClearStartUpError() {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: -1, http-port: -1}
                warm-up: false
                kafka: {bootstrap-servers: "%s", consume: true, event-topic: no-such-topic}
                """.formatted(broker.bootstrap()), "test");
        ConfigException e = org.junit.jupiter.api.Assertions.assertThrows(ConfigException.class, () -> AfterglowNode.start(config));
        assertTrue(e.getMessage().contains("topic(s) [no-such-topic] do not exist on " + broker.bootstrap()), e.getMessage());
    }

    @Test
    void aMemberStartingOnAnOldBacklogPassesOverItAtOnce() throws Exception {
        String[] topic = newTopics();
        List<EventBatch> packets = scene(19, 1.0);
        int old = packets.size() / 2;
        try (TopicSensor sensors = new TopicSensor(broker.bootstrap(), topic[0])) {
            // Half the packets were produced a minute ago, before any member ran (an outage).
            long aMinuteAgo = System.currentTimeMillis() - 60_000;
            for (int i = 0; i < old; i++) {
                sensors.eventsMadeAt("cam", i, packets.get(i), aMinuteAgo);
            }
            sensors.flush();
            try (AfterglowNode node = AfterglowNode.start(member("o", topic, "g6", List.of("cam"), 50))) {
                waitFor("owns every partition", 30, () -> owned(node) == 4);
                assertEquals(old, node.counters().get(NodeCounter.KAFKA_SKIPPED_AT_ASSIGN), "the backlog passed over at once");
                long fresh = 0;
                for (int i = old; i < packets.size(); i++) {
                    sensors.events("cam", i, packets.get(i));
                    fresh += packets.get(i).size;
                }
                sensors.flush();
                long expected = fresh;
                waitFor("the live half applied", 30, () -> node.sensors().get("cam").counters().get(NodeCounter.EVENTS_KAFKA) == expected);
                assertEquals(0, node.sensors().get("cam").counters().get(NodeCounter.KAFKA_SKIPPED_RECORDS),
                        "nothing left to skip one by one");
            }
        }
    }

    @Test
    void theFrameTopicTakesFramesAtItsRateAndDownscaleAndOnlyThoseAreReadOut() throws Exception {
        String[] topic = newTopics();
        List<EventBatch> packets = scene(23, 1.0);
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: -1, http-port: -1}
                warm-up: false
                kafka: {bootstrap-servers: "%s", consume: true, group: g7, event-topic: %s, frame-topic: %s,
                        frame-rate-hz: 10, frame-downscale: 2}
                sensors:
                %s""".formatted(broker.bootstrap(), topic[0], topic[1], sensorList(List.of("cam"), 10_000)), "rate");
        try (AfterglowNode node = AfterglowNode.start(config);
                TopicSensor sensors = new TopicSensor(broker.bootstrap(), topic[0]);
                KafkaConsumer<byte[], byte[]> frames = frameConsumer(broker.bootstrap(), topic[1])) {
            waitFor("owns every partition", 30, () -> owned(node) == 4);
            long start = System.nanoTime();
            for (int i = 0; i < packets.size(); i++) {
                SceneEvents.paceRealTime(start, packets.get(i).timeBaseUs + 1_000);
                sensors.events("cam", i, packets.get(i));
            }
            sensors.flush();
            List<IntensityFrame> got = new ArrayList<>();
            long deadline = System.nanoTime() + 20_000_000_000L;
            while (got.size() < 8 && System.nanoTime() < deadline) {
                for (ConsumerRecord<byte[], byte[]> r : frames.poll(Duration.ofMillis(200))) {
                    got.add(Envelope.parseFrom(r.value()).getIntensityFrame());
                }
            }
            assertTrue(got.size() >= 8, got.size() + " frame records");
            for (int i = 0; i < got.size(); i++) {
                IntensityFrame f = got.get(i);
                assertEquals(W / 2, f.getWidth());
                assertEquals(H / 2, f.getHeight());
                assertEquals(0, f.getFrameTimeUs() % 100_000, "every fifth frame of the 50 Hz grid: " + f.getFrameTimeUs());
                if (i > 0) {
                    assertEquals(100_000, f.getFrameTimeUs() - got.get(i - 1).getFrameTimeUs());
                }
            }
            var c = node.sensors().get("cam").counters();
            assertTrue(c.get(NodeCounter.FRAMES_UNREAD) >= 4 * c.get(NodeCounter.FRAMES_PUBLISHED) - 8,
                    "the frames the topic does not take are not read out: unread " + c.get(NodeCounter.FRAMES_UNREAD)
                            + ", published " + c.get(NodeCounter.FRAMES_PUBLISHED));
        }
    }
}
