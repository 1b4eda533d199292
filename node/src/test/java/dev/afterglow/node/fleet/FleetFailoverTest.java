package dev.afterglow.node.fleet;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.e2e.HttpEndpointsTest;
import dev.afterglow.node.e2e.SceneEvents;
import dev.afterglow.node.stats.NodeCounter;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.utils.Utils;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Failover: two node processes in one group share four sensors streaming in real time; one is
 * killed with SIGKILL. Its sensors' frames must resume from the other within 5 s (consumer
 * settings: session timeout 2 s, heartbeat 300 ms, commits every 100 ms), nothing sent after the
 * kill may be lost, and the hand-over shows in the survivor's metrics (rebalances, records
 * re-read after the dead member's last commit).
 */
@Timeout(value = 180, unit = TimeUnit.SECONDS)
class FleetFailoverTest {
    private static final int W = FleetEndToEndTest.W;
    private static final int H = FleetEndToEndTest.H;
    private static final long RESUME_TARGET_NANOS = 5_000_000_000L;
    @TempDir
    Path dir;

    /** Sensor ids whose keys land in partitions 0..3 of a 4-partition topic (Kafka's default partitioner: murmur2 of the key). */
    private static List<String> onePerPartition() {
        String[] chosen = new String[4];
        for (int i = 0; chosen[0] == null || chosen[1] == null || chosen[2] == null || chosen[3] == null; i++) {
            String id = "cam-" + i;
            int p = Utils.toPositive(Utils.murmur2(id.getBytes(StandardCharsets.UTF_8))) % 4;
            if (chosen[p] == null) {
                chosen[p] = id;
            }
        }
        return List.of(chosen);
    }

    private Process startNode(String name, int http, String bootstrap, List<String> ids) throws Exception {
        Path config = Files.writeString(dir.resolve(name + ".yaml"), """
                listen: {ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: -1, http-port: %d}
                warm-up: false
                kafka:
                  bootstrap-servers: "%s"
                  consume: true
                  group: failover
                  member-name: %s
                  event-topic: events
                  frame-topic: frames
                  commit-interval-ms: 100
                  session-timeout-ms: 2000
                  heartbeat-interval-ms: 300
                sensors:
                %s""".formatted(http, bootstrap, name, FleetEndToEndTest.sensorList(ids, 10_000)));
        return new ProcessBuilder(Path.of(System.getProperty("java.home"), "bin", "java").toString(), "-Xmx512m",
                "-cp", System.getProperty("java.class.path"), "dev.afterglow.node.AfterglowCli", "serve", "--config", config.toString())
                .redirectErrorStream(true).redirectOutput(dir.resolve(name + ".log").toFile()).start();
    }

    private static String metrics(int http) {
        try {
            return HttpClient.newHttpClient().send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + http + "/metrics"))
                    .timeout(Duration.ofSeconds(5)).build(), HttpResponse.BodyHandlers.ofString()).body();
        } catch (Exception e) {
            return "";
        }
    }

    private static double owned(int http) {
        double v = HttpEndpointsTest.sample(metrics(http), "afterglow_kafka_partitions_owned");
        return Double.isNaN(v) ? -1 : v;
    }

    @Test
    void sensorsOfAKilledMemberResumeOnTheOtherWithinFiveSeconds() throws Exception {
        List<String> ids = onePerPartition();
        Map<String, List<EventBatch>> scenes = new HashMap<>();
        for (int i = 0; i < ids.size(); i++) {
            scenes.put(ids.get(i), SceneEvents.packets(W, H, 20_000_000, 5_000, 31 + i));
        }
        try (KafkaTestBroker broker = KafkaTestBroker.start(dir);
                Admin admin = Admin.create(Map.of("bootstrap.servers", broker.bootstrap()))) {
            admin.createTopics(List.of(new NewTopic("events", 4, (short) 1), new NewTopic("frames", 4, (short) 1))).all().get();
            int httpA = KafkaTestBroker.freePort();
            int httpB = KafkaTestBroker.freePort();
            Process a = startNode("a", httpA, broker.bootstrap(), ids);
            Process b = startNode("b", httpB, broker.bootstrap(), ids);
            AtomicBoolean streaming = new AtomicBoolean(true);
            Map<String, Long> lastFrameNanos = new ConcurrentHashMap<>();
            Map<String, String> lastMember = new ConcurrentHashMap<>();
            Map<String, Long> firstFrameFromBAfterKill = new ConcurrentHashMap<>();
            long[] killNanos = {Long.MAX_VALUE};
            long[] eventsAfterKill = new long[ids.size()];
            Thread sender = null;
            Thread reader = null;
            try {
                FleetEndToEndTest.waitFor("both members share the partitions", 60,
                        () -> owned(httpA) > 0 && owned(httpB) > 0 && owned(httpA) + owned(httpB) == 4);
                sender = new Thread(() -> {
                    try (TopicSensor sensors = new TopicSensor(broker.bootstrap(), "events")) {
                        long start = System.nanoTime();
                        int n = scenes.get(ids.get(0)).size();
                        for (int k = 0; k < n && streaming.get(); k++) {
                            SceneEvents.paceRealTime(start, scenes.get(ids.get(0)).get(k).timeBaseUs + 5_000);
                            boolean afterKill = System.nanoTime() > killNanos[0];
                            for (int i = 0; i < ids.size(); i++) {
                                List<EventBatch> packets = scenes.get(ids.get(i));
                                if (k < packets.size()) {
                                    sensors.events(ids.get(i), k, packets.get(k));
                                    if (afterKill) {
                                        eventsAfterKill[i] += packets.get(k).size;
                                    }
                                }
                            }
                        }
                        sensors.flush();
                    } catch (InterruptedException e) {
                        Thread.currentThread().interrupt();
                    }
                });
                reader = new Thread(() -> {
                    try (KafkaConsumer<byte[], byte[]> frames = FleetEndToEndTest.frameConsumer(broker.bootstrap(), "frames")) {
                        while (streaming.get()) {
                            for (ConsumerRecord<byte[], byte[]> r : frames.poll(Duration.ofMillis(50))) {
                                String id = EventRecords.sensorId(r.key());
                                String member = new String(r.headers().lastHeader(EventRecords.MEMBER_HEADER).value(),
                                        StandardCharsets.UTF_8);
                                long now = System.nanoTime();
                                if (now > killNanos[0] && member.equals("b")) {
                                    firstFrameFromBAfterKill.putIfAbsent(id, now);
                                }
                                if (now <= killNanos[0]) {
                                    lastFrameNanos.put(id, now);
                                    lastMember.put(id, member);
                                }
                            }
                        }
                    }
                });
                reader.start();
                sender.start();
                FleetEndToEndTest.waitFor("frames of every sensor", 30, () -> lastMember.size() == ids.size());
                Thread.sleep(3000);
                List<String> onA = new ArrayList<>();
                for (String id : ids) {
                    if ("a".equals(lastMember.get(id))) {
                        onA.add(id);
                    }
                }
                assertTrue(!onA.isEmpty() && onA.size() < ids.size(), "both members hold sensors: " + lastMember);
                double rebalancesBefore = HttpEndpointsTest.sample(metrics(httpB), "afterglow_kafka_rebalances_total");
                killNanos[0] = System.nanoTime();
                a.destroyForcibly(); // SIGKILL: no clean hand-over, no last commit
                a.waitFor();
                FleetEndToEndTest.waitFor("a's sensors resume on b", 30, () -> onA.stream().allMatch(firstFrameFromBAfterKill::containsKey));
                for (String id : onA) {
                    long gap = firstFrameFromBAfterKill.get(id) - lastFrameNanos.get(id);
                    System.out.printf("failover: %s resumed on b %.2f s after its last frame from a (kill -9 at %.2f s before)%n",
                            id, gap / 1e9, (firstFrameFromBAfterKill.get(id) - killNanos[0]) / 1e9);
                    assertTrue(gap <= RESUME_TARGET_NANOS, id + ": frames resumed after " + gap / 1e6 + " ms, target 5000 ms");
                }
                Thread.sleep(2000);
                streaming.set(false);
                sender.join();
                Thread.sleep(1000);
                String m = metrics(httpB);
                assertTrue(HttpEndpointsTest.sample(m, "afterglow_kafka_rebalances_total") > rebalancesBefore,
                        "the take-over shows as a rebalance on b");
                double reread = 0;
                for (String id : onA) {
                    int i = ids.indexOf(id);
                    double applied = HttpEndpointsTest.sample(m, HttpEndpointsTest.promName(NodeCounter.EVENTS_KAFKA), "sensor=\"" + id + "\"");
                    assertTrue(applied >= eventsAfterKill[i], id + ": b read every event sent after the kill ("
                            + applied + " >= " + eventsAfterKill[i] + ")");
                    reread += HttpEndpointsTest.sample(m, HttpEndpointsTest.promName(NodeCounter.KAFKA_REREAD_RECORDS), "sensor=\"" + id + "\"");
                }
                assertTrue(reread > 0, "records a may have applied after its last commit are counted as re-read on b");
                System.out.printf("failover: b re-read %.0f records of a's sensors%n", reread);
            } finally {
                streaming.set(false);
                if (sender != null) {
                    sender.join(5000);
                }
                if (reader != null) {
                    reader.join(5000);
                }
                a.destroyForcibly();
                b.destroy();
                b.waitFor(10, TimeUnit.SECONDS);
                b.destroyForcibly();
            }
        }
    }
}
