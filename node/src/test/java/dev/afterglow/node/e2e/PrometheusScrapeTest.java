package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.proto.v1.PixelFormat;
import java.io.IOException;
import java.net.ServerSocket;
import java.net.URI;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * A real Prometheus server (Debian's prometheus package) scrapes the node on loopback every second
 * while a sensor streams, and its query API returns the node's event counter and latency series
 * with non-zero values. In CI (CI=true) a missing prometheus fails the test; elsewhere it is skipped.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class PrometheusScrapeTest {
    private static final Path PROMETHEUS = Path.of("/usr/bin/prometheus");
    private static final int W = 64;
    private static final int H = 48;

    @Test
    void prometheusShouldScrapeEventAndLatencySeries(@TempDir Path dir) throws Exception {
        if (!Files.isExecutable(PROMETHEUS)) {
            if ("true".equals(System.getenv("CI"))) {
                throw new AssertionError("CI must provide " + PROMETHEUS + " (Debian package prometheus)");
            }
            Assumptions.abort(PROMETHEUS + " not found (Debian package prometheus)");
        }
        List<EventBatch> packets = SceneEvents.packets(W, H, 30_000_000, 5_000, 3);
        HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
        // A subscriber, so frames are read out and the sensor-to-publish series has values.
        try (AfterglowNode node = AfterglowNode.start(HttpEndpointsTest.config("dock"));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "dock", 0,
                        PixelFormat.PIXEL_FORMAT_GRAY8)) {
            Thread sender = new Thread(() -> {
                try (SensorClient s = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "dock", W, H, false)) {
                    long start = System.nanoTime();
                    for (EventBatch b : packets) {
                        StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 5_000);
                        s.sendEvents(b);
                        s.flush();
                    }
                } catch (IOException | InterruptedException e) {
                    // the node is closed while the sensor still streams
                }
            }, "test-sensor");
            sender.setDaemon(true);
            sender.start();

            int promPort;
            try (ServerSocket probe = new ServerSocket(0, 1, java.net.InetAddress.getLoopbackAddress())) {
                promPort = probe.getLocalPort();
            }
            Path cfg = dir.resolve("prometheus.yml");
            Files.writeString(cfg, """
                    global:
                      scrape_interval: 1s
                      evaluation_interval: 1s
                    scrape_configs:
                      - job_name: afterglow
                        scrape_interval: 1s
                        static_configs:
                          - targets: ['127.0.0.1:%d']
                    """.formatted(node.httpPort()));
            Path log = dir.resolve("prometheus.log");
            Process prometheus = new ProcessBuilder(PROMETHEUS.toString(), "--config.file=" + cfg,
                    "--storage.tsdb.path=" + dir.resolve("data"), "--web.listen-address=127.0.0.1:" + promPort)
                    .redirectErrorStream(true).redirectOutput(log.toFile()).start();
            try {
                String events = "afterglow_ingest_events_total{sensor=\"dock\"}";
                String latency = "afterglow_latency_arrival_to_applied_seconds{sensor=\"dock\",quantile=\"0.99\"}";
                String publish = "afterglow_latency_sensor_to_publish_seconds{sensor=\"dock\",quantile=\"0.5\"}";
                long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(25);
                boolean eventsSeen = false;
                boolean latencySeen = false;
                boolean publishSeen = false;
                String last = "";
                while (!(eventsSeen && latencySeen && publishSeen) && System.nanoTime() < deadline) {
                    Thread.sleep(500);
                    try {
                        if (!eventsSeen) {
                            last = query(http, promPort, events);
                            eventsSeen = positive(last);
                        }
                        if (!latencySeen) {
                            last = query(http, promPort, latency);
                            latencySeen = positive(last);
                        }
                        if (!publishSeen) {
                            last = query(http, promPort, publish);
                            publishSeen = positive(last);
                        }
                    } catch (IOException e) {
                        last = e.toString(); // Prometheus not listening yet
                    }
                }
                String context = "last answer: " + last + "\nprometheus log:\n" + tail(log);
                assertTrue(eventsSeen, "event counter not seen with a non-zero value; " + context);
                assertTrue(latencySeen, "arrival-to-applied latency not seen with a non-zero value; " + context);
                assertTrue(publishSeen, "sensor-to-publish latency not seen with a non-zero value; " + context);
            } finally {
                prometheus.destroy();
                if (!prometheus.waitFor(10, TimeUnit.SECONDS)) {
                    prometheus.destroyForcibly().waitFor(5, TimeUnit.SECONDS);
                }
                sender.interrupt();
            }
        }
    }

    private static String query(HttpClient http, int port, String promql) throws IOException, InterruptedException {
        URI uri = URI.create("http://127.0.0.1:" + port + "/api/v1/query?query="
                + URLEncoder.encode(promql, StandardCharsets.UTF_8));
        return http.send(HttpRequest.newBuilder(uri).timeout(Duration.ofSeconds(5)).GET().build(),
                HttpResponse.BodyHandlers.ofString()).body();
    }

    /** True if a Prometheus instant-query answer (HTTP API, vector result) holds a sample above zero. */
    private static boolean positive(String answer) throws IOException {
        JsonNode root = new ObjectMapper().readTree(answer);
        if (!"success".equals(root.path("status").asText())) {
            return false;
        }
        for (JsonNode r : root.path("data").path("result")) {
            double v = Double.parseDouble(r.path("value").path(1).asText("0"));
            if (v > 0) {
                return true;
            }
        }
        return false;
    }

    private static String tail(Path log) {
        try {
            List<String> lines = Files.readAllLines(log);
            return String.join("\n", lines.subList(Math.max(0, lines.size() - 20), lines.size()));
        } catch (IOException e) {
            return e.toString();
        }
    }
}
