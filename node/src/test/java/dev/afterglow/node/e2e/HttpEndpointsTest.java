package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.PixelFormat;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * The node's HTTP endpoints on loopback while a sensor streams: Prometheus text exposition with
 * every counter and the latency series, JSON status, health, readiness, 404 and 405.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
public class HttpEndpointsTest {
    private static final int W = 64;
    private static final int H = 48;

    static NodeConfig config(String sensorId) {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                sensors:
                  - {id: %s, width: %d, height: %d, frame-rate-hz: 50, latency-budget-ms: 2000}
                """.formatted(sensorId, W, H), "test");
    }

    static HttpResponse<String> get(HttpClient http, int port, String path) throws Exception {
        return http.send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + port + path))
                .timeout(Duration.ofSeconds(10)).GET().build(), HttpResponse.BodyHandlers.ofString());
    }

    /** Value of the first sample of {@code name} whose labels contain every one of {@code labels}; NaN if none. */
    public static double sample(String exposition, String name, String... labels) {
        for (String line : exposition.lines().toList()) {
            if (!line.startsWith(name + "{") && !line.startsWith(name + " ")) {
                continue;
            }
            boolean all = true;
            for (String l : labels) {
                all &= line.contains(l);
            }
            if (all) {
                return Double.parseDouble(line.substring(line.lastIndexOf(' ') + 1));
            }
        }
        return Double.NaN;
    }

    /** Prometheus name of a counter: dots to underscores plus {@code _total} (Prometheus naming conventions). */
    public static String promName(NodeCounter c) {
        return c.meterName().replace('.', '_') + "_total";
    }

    @Test
    void shouldServeMetricsStatusHealthAndErrors() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 600_000, 2_000, 5);
        long eventsSent = packets.stream().mapToLong(b -> b.size).sum();
        HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
        try (AfterglowNode node = AfterglowNode.start(config("gate"));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "gate", 0,
                        PixelFormat.PIXEL_FORMAT_GRAY8)) {
            int port = node.httpPort();
            assertTrue(port > 0);
            assertEquals(200, get(http, port, "/ready").statusCode());
            HttpResponse<String> health = get(http, port, "/health");
            assertEquals(200, health.statusCode());
            assertEquals("ok", health.body().strip());

            sub.setTimeoutMillis(20_000);
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "gate", W, H, false)) {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 2_000);
                    sensor.sendEvents(b);
                    sensor.flush();
                }
            }
            sub.next();
            sub.next();
            var counters = node.sensors().get("gate").counters();
            StreamingEndToEndTest.waitFor(() -> counters.get(NodeCounter.EVENTS_RECEIVED) == eventsSent);
            // The last packet's latency values are recorded after its events are counted.
            StreamingEndToEndTest.waitFor(() -> node.sensors().get("gate").arrivalToAppliedLatency().count() == packets.size());

            HttpResponse<String> metrics = get(http, port, "/metrics");
            assertEquals(200, metrics.statusCode());
            // Prometheus exposition formats, text format version 0.0.4.
            assertEquals("text/plain; version=0.0.4; charset=utf-8", metrics.headers().firstValue("content-type").orElse(""));
            String text = metrics.body();
            for (NodeCounter c : NodeCounter.values()) {
                String label = c.scope() == NodeCounter.Scope.SENSOR ? "sensor=\"gate\"" : "";
                assertTrue(!Double.isNaN(sample(text, promName(c), label)), promName(c) + " missing:\n" + text);
            }
            assertEquals(eventsSent, sample(text, "afterglow_ingest_events_total", "sensor=\"gate\""));
            assertEquals(packets.size(), sample(text, "afterglow_ingest_tcp_packets_total", "sensor=\"gate\""));
            assertEquals(eventsSent, sample(text, "afterglow_ingest_tcp_events_total", "sensor=\"gate\""));
            assertEquals(0, sample(text, "afterglow_ingest_udp_events_total", "sensor=\"gate\""));
            assertEquals(0, sample(text, "afterglow_ingest_rejected_events_total", "sensor=\"gate\""));
            assertEquals(counters.get(NodeCounter.FRAMES_PUBLISHED), sample(text, "afterglow_frames_published_total", "sensor=\"gate\""));
            assertTrue(sample(text, "afterglow_stage_input_events_total", "sensor=\"gate\"", "position=\"0\"") >= eventsSent);
            assertEquals(1, sample(text, "afterglow_subscribers_connected"));
            assertTrue(!Double.isNaN(sample(text, "afterglow_pending_packets", "sensor=\"gate\"")));
            assertTrue(sample(text, "afterglow_processing_lag_seconds", "sensor=\"gate\"") > 0);
            for (String latency : List.of("afterglow_latency_sensor_to_publish", "afterglow_latency_readout",
                    "afterglow_latency_arrival_to_applied", "afterglow_latency_readout_to_socket")) {
                for (String q : List.of("0.5", "0.9", "0.99", "0.999")) {
                    double v = sample(text, latency + "_seconds", "sensor=\"gate\"", "quantile=\"" + q + "\"");
                    assertTrue(v > 0 && v < 60, latency + " q" + q + " = " + v);
                }
                assertTrue(sample(text, latency + "_max_seconds", "sensor=\"gate\"") > 0, latency + " max");
                assertTrue(sample(text, latency + "_samples_total", "sensor=\"gate\"") > 0, latency + " samples");
            }
            // Stage time per packet, per stage of the chain (the first stage sees every packet).
            var stages = node.sensors().get("gate").chain().stages();
            for (int i = 0; i < stages.size(); i++) {
                String[] labels = {"sensor=\"gate\"", "stage=\"" + stages.get(i).name() + "\"", "position=\"" + i + "\""};
                assertTrue(sample(text, "afterglow_stage_time_samples_total", labels) > 0, "stage " + i + " samples");
                assertTrue(sample(text, "afterglow_stage_time_max_seconds", labels) > 0, "stage " + i + " max");
            }
            assertEquals(packets.size(), sample(text, "afterglow_stage_time_samples_total", "sensor=\"gate\"", "position=\"0\""));
            // One arrival-to-applied value per packet that reached the chain.
            assertEquals(packets.size(), sample(text, "afterglow_latency_arrival_to_applied_samples_total", "sensor=\"gate\""));

            HttpResponse<String> status = get(http, port, "/status");
            assertEquals(200, status.statusCode());
            assertTrue(status.headers().firstValue("content-type").orElse("").startsWith("application/json"));
            JsonNode root = new ObjectMapper().readTree(status.body());
            JsonNode s = root.path("sensors").path(0);
            assertEquals("gate", s.path("id").asText());
            assertEquals(W, s.path("width").asInt());
            assertEquals(H, s.path("height").asInt());
            assertEquals(node.sensors().get("gate").config().chain, s.path("chain").asText());
            assertEquals(50.0, s.path("frameRateHz").asDouble());
            assertEquals(packets.size(), s.path("packets").asLong());
            assertEquals(eventsSent, s.path("events").asLong());
            assertEquals(0, s.path("eventsShed").asLong());
            assertTrue(s.path("framesPublished").asLong() >= 2);
            assertTrue(s.has("pendingPackets"));
            JsonNode subscriber = root.path("subscribers").path(0);
            assertEquals("gate", subscriber.path("sensor").asText());
            assertTrue(subscriber.path("delivered").asLong() >= 2);
            assertEquals(0, subscriber.path("missed").asLong());

            assertEquals(404, get(http, port, "/nothing-here").statusCode());
            HttpResponse<String> post = http.send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + port + "/metrics"))
                    .timeout(Duration.ofSeconds(10)).POST(HttpRequest.BodyPublishers.ofString("x")).build(),
                    HttpResponse.BodyHandlers.ofString());
            assertEquals(405, post.statusCode());
        }
    }

    @Test
    void shouldNotListenForHttpWhenDisabled() throws Exception {
        NodeConfig c = NodeConfig.parse("listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: -1, http-port: -1}", "test");
        try (AfterglowNode node = AfterglowNode.start(c)) {
            assertEquals(-1, node.httpPort());
            assertTrue(node.ready());
        }
    }
}
