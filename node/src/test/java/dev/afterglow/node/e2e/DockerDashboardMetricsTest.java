package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.node.fleet.KafkaTestBroker;
import java.net.http.HttpClient;
import java.nio.file.Files;
import java.nio.file.Path;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The Grafana dashboard against a live node: the node runs on loopback with the configuration the
 * compose file mounts (only address and ports changed), a TCP and a UDP sensor stream the
 * parcel-line scene in real time, and every metric name in every dashboard query must be a series
 * the node's /metrics really exports.
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class DockerDashboardMetricsTest {
    private static final int W = 64;
    private static final int H = 48;

    /** What the dashboard must show, as the metric names that carry it. */
    private static final Map<String, List<String>> TOPICS = new LinkedHashMap<>();

    static {
        TOPICS.put("event throughput in and out per sensor", List.of("afterglow_ingest_events_total",
                "afterglow_stage_input_events_total", "afterglow_stage_output_events_total"));
        TOPICS.put("packets and events per transport", List.of("afterglow_ingest_tcp_packets_total", "afterglow_ingest_udp_packets_total",
                "afterglow_ingest_tcp_events_total", "afterglow_ingest_udp_events_total"));
        TOPICS.put("shed and rejected events by reason", List.of("afterglow_shed_latency_events_total", "afterglow_shed_queue_events_total",
                "afterglow_ingest_rejected_events_total"));
        TOPICS.put("malformed input by kind", List.of("afterglow_ingest_packets_malformed_total",
                "afterglow_ingest_malformed_messages_total", "afterglow_ingest_oversized_messages_total",
                "afterglow_ingest_truncated_streams_total", "afterglow_ingest_protocol_errors_total"));
        TOPICS.put("UDP loss, reorder, duplicates", List.of("afterglow_ingest_udp_lost_packets_total",
                "afterglow_ingest_udp_reordered_packets_total", "afterglow_ingest_udp_duplicate_packets_total"));
        TOPICS.put("latency percentiles per sensor", List.of("afterglow_latency_sensor_to_publish_seconds",
                "afterglow_latency_sensor_to_publish_max_seconds", "afterglow_latency_arrival_to_applied_seconds",
                "afterglow_latency_arrival_to_applied_max_seconds", "afterglow_latency_readout_seconds",
                "afterglow_latency_readout_max_seconds", "afterglow_latency_readout_to_socket_seconds",
                "afterglow_latency_readout_to_socket_max_seconds", "afterglow_stage_time_seconds", "afterglow_stage_time_max_seconds"));
        TOPICS.put("processing lag", List.of("afterglow_processing_lag_seconds"));
        TOPICS.put("subscribers connected", List.of("afterglow_subscribers_connected"));
        TOPICS.put("fleet: partitions owned, consumer lag, rebalances, skipped records", List.of("afterglow_kafka_partitions_owned",
                "afterglow_kafka_consumer_lag_records", "afterglow_kafka_rebalances_total", "afterglow_kafka_skipped_records_total"));
        TOPICS.put("frames published and missed", List.of("afterglow_frames_published_total", "afterglow_frames_missed_total"));
    }

    @Test
    void everyDashboardQueryShouldUseOnlySeriesTheNodeExports(@TempDir Path fleetDir) throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 1_500_000, 2_000, 5);
        HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
        String udpSensor = "dock-door"; // listed in docker/node/afterglow.yaml (320x240), so it takes datagrams
        try (AfterglowNode node = AfterglowNode.start(DockerFiles.loopbackConfig());
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), udpSensor, 0,
                        PixelFormat.PIXEL_FORMAT_GRAY8)) {
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            // The scene at 64x48 lies inside the listed 320x240 sensor; the TCP sensor is unlisted and
            // introduces itself with its hello.
            try (SensorClient tcp = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "parcel-line", W, H, false);
                    UdpSensorClient udp = new UdpSensorClient("127.0.0.1", node.ingestUdpPort(), udpSensor)) {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 2_000);
                    tcp.sendEvents(b);
                    tcp.flush();
                    udp.sendEvents(b);
                }
            }
            var udpCounters = node.sensors().get(udpSensor).counters();
            StreamingEndToEndTest.waitFor(() -> node.sensors().get("parcel-line") != null
                    && node.sensors().get("parcel-line").counters().get(NodeCounter.PACKETS_TCP) == packets.size()
                    && udpCounters.get(NodeCounter.PACKETS_UDP) > 0); // datagrams may be lost, even on loopback
            // parcel-line has no subscriber: its frame times pass unread.
            StreamingEndToEndTest.waitFor(() -> node.sensors().get("parcel-line").counters().get(NodeCounter.FRAMES_UNREAD) > 0
                    && udpCounters.get(NodeCounter.FRAMES_PUBLISHED) > 0);

            sub.setTimeoutMillis(10_000);
            sub.next(); // frames reach a subscriber, so the subscriber and frame series carry data

            HttpResponse<String> metrics = HttpEndpointsTest.get(http, node.httpPort(), "/metrics");
            assertEquals(200, metrics.statusCode());
            // The node's series first (samples are looked up first-match), then the fleet's.
            String text = metrics.body() + fleetMetrics(http, fleetDir);
            Set<String> exported = DockerFiles.sampleNames(text);
            assertEquals(1, HttpEndpointsTest.sample(text, "afterglow_subscribers_connected"));

            JsonNode dashboard = DockerFiles.dashboard();
            List<DockerFiles.Target> targets = DockerFiles.targets(dashboard);
            Set<String> used = new TreeSet<>();
            for (DockerFiles.Target t : targets) {
                Set<String> names = DockerFiles.metricNames(t.expr());
                assertTrue(!names.isEmpty(), t.panel() + ": no metric in " + t.expr());
                for (String name : names) {
                    assertTrue(exported.contains(name), t.panel() + ": " + name + " is not exported; /metrics has " + exported);
                    // A per-sensor series is filtered by the dashboard's sensor variable.
                    if (!Double.isNaN(HttpEndpointsTest.sample(text, name, "sensor=\""))) {
                        assertTrue(t.expr().contains(name + "{sensor=~\"$sensor\""), t.panel() + ": " + name + " without $sensor in " + t.expr());
                    }
                }
                used.addAll(names);
                quantilesExported(t, text);
            }
            for (Map.Entry<String, List<String>> topic : TOPICS.entrySet()) {
                for (String name : topic.getValue()) {
                    assertTrue(used.contains(name), "no panel for " + topic.getKey() + ": " + name + " unused");
                }
            }

            // The sensor variable lists a label that the named series carries.
            JsonNode variable = dashboard.path("templating").path("list").path(0);
            assertEquals("sensor", variable.path("name").asText());
            Matcher lv = Pattern.compile("label_values\\((\\w+),\\s*(\\w+)\\)").matcher(variable.path("query").path("query").asText());
            assertTrue(lv.matches(), variable.toString());
            assertTrue(exported.contains(lv.group(1)), lv.group(1));
            for (String sensor : List.of("parcel-line", udpSensor)) {
                assertTrue(!Double.isNaN(HttpEndpointsTest.sample(text, lv.group(1), lv.group(2) + "=\"" + sensor + "\"")), sensor);
            }
        }
    }

    /**
     * The compose fleet's nodes on loopback around a real broker: the edge (its configuration, a
     * sensor streaming into it) and a processing-group member (its configuration), whose
     * /metrics texts carry the series of the dashboard's fleet row.
     */
    private static String fleetMetrics(HttpClient http, Path dir) throws Exception {
        try (KafkaTestBroker broker = KafkaTestBroker.start(dir);
                Admin admin = Admin.create(Map.of("bootstrap.servers", broker.bootstrap()))) {
            NodeConfig edgeConfig = DockerFiles.fleetLoopbackConfig("edge", broker.bootstrap());
            NodeConfig memberConfig = DockerFiles.fleetLoopbackConfig("member-a", broker.bootstrap());
            admin.createTopics(List.of(new NewTopic(edgeConfig.kafka.eventTopic, 4, (short) 1),
                    new NewTopic(memberConfig.kafka.frameTopic, 4, (short) 1))).all().get();
            try (AfterglowNode member = AfterglowNode.start(memberConfig); AfterglowNode edge = AfterglowNode.start(edgeConfig)) {
                StreamingEndToEndTest.waitFor(() -> member.fleet().source().partitionsOwned() == 4);
                List<EventBatch> packets = SceneEvents.packets(W, H, 300_000, 2_000, 9);
                try (SensorClient fleetSensor = SensorClient.connect("127.0.0.1", edge.ingestTcpPort(), "orchard-pan", W, H, false)) {
                    for (EventBatch b : packets) {
                        fleetSensor.sendEvents(b);
                    }
                    fleetSensor.flush();
                    StreamingEndToEndTest.waitFor(() -> member.sensors().get("orchard-pan") != null
                            && member.sensors().get("orchard-pan").counters().get(NodeCounter.KAFKA_FRAMES_PRODUCED) > 0);
                }
                return "\n" + HttpEndpointsTest.get(http, edge.httpPort(), "/metrics").body()
                        + "\n" + HttpEndpointsTest.get(http, member.httpPort(), "/metrics").body();
            }
        }
    }

    /** Each quantile a target selects with quantile=~"a|b" is one the node exports for that series. */
    private static void quantilesExported(DockerFiles.Target t, String text) {
        Matcher m = Pattern.compile("(\\w+)\\{[^}]*quantile=~\"([^\"]+)\"").matcher(t.expr());
        while (m.find()) {
            for (String q : m.group(2).split("\\|")) {
                assertTrue(!Double.isNaN(HttpEndpointsTest.sample(text, m.group(1), "quantile=\"" + q + "\"")),
                        t.panel() + ": " + m.group(1) + " has no quantile " + q);
            }
        }
    }
}
