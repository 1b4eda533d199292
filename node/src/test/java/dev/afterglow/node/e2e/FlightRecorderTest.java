package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowCli;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.recording.RecordingReader;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The flight recorder over HTTP and the CLI, as an operator uses it: a sensor records into a ring
 * that keeps only the newest data, the ring is pinned after "an incident" (HTTP and `afterglow
 * pin`) and the pinned copy reads back whole, recording is switched off and on at run time, and
 * the status shows what the recorder does.
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class FlightRecorderTest {
    private static final int W = StreamingEndToEndTest.W;
    private static final int H = StreamingEndToEndTest.H;
    @TempDir
    Path dir;

    private static HttpResponse<String> send(int port, String method, String path, String body) throws Exception {
        return HttpClient.newHttpClient().send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + port + path))
                .method(method, body == null ? HttpRequest.BodyPublishers.noBody() : HttpRequest.BodyPublishers.ofString(body))
                .build(), HttpResponse.BodyHandlers.ofString());
    }

    private static long dirBytes(Path folder) {
        try (var files = Files.list(folder)) {
            long sum = 0;
            for (Path p : files.filter(Files::isRegularFile).toList()) {
                sum += Files.size(p);
            }
            return sum;
        } catch (java.io.IOException e) {
            throw new java.io.UncheckedIOException(e);
        }
    }

    @Test
    void shouldKeepTheNewestDataPinItAndSwitchAtRunTime() throws Exception {
        Path folder = dir.resolve("ring");
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                control: {enabled: true}
                sensors:
                  - {id: bench, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 5000,
                     record: {folder: '%s', segment-mb: 0.05, keep-mb: 0.2, flush-ms: 50}}
                """.formatted(W, H, folder), "test");
        List<EventBatch> packets = SceneEvents.packets(W, H, 1_500_000, 1_000, 41);
        try (AfterglowNode node = AfterglowNode.start(config)) {
            int http = node.httpPort();
            var counters = node.sensors().get("bench").counters();
            try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "bench", W, H, false)) {
                for (EventBatch b : packets) {
                    sensor.sendEvents(b);
                }
                sensor.flush();
                StreamingEndToEndTest.waitFor(() -> counters.get(NodeCounter.RECORDED_MESSAGES) == packets.size() + 1);
                Path ring = folder.resolve("bench");
                // the last records reach the files at the recorder's next flush (flush-ms 50, polled every 100 ms)
                StreamingEndToEndTest.waitFor(() -> dirBytes(ring) >= 200 * 1024);
                long onDisk = dirBytes(ring);
                assertTrue(onDisk >= 200 * 1024 && onDisk <= 260 * 1024, "the newest 200 kB plus at most one segment: " + onDisk);
                String status = HttpEndpointsTest.get(HttpClient.newHttpClient(), http, "/status").body();
                assertTrue(status.contains("\"recording\":\"recording into " + ring), status);

                // An incident: pin the ring over HTTP, then with the CLI.
                HttpResponse<String> pinned = send(http, "POST", "/config/sensors/bench/pin", "{\"name\": \"incident-1\"}");
                assertEquals(200, pinned.statusCode(), pinned.body());
                assertTrue(pinned.body().contains("incident-1"), pinned.body());
                assertEquals(0, AfterglowCli.commandLine().execute("pin", "--http", "127.0.0.1:" + http,
                        "--sensor-id", "bench", "--name", "incident-2"));
                assertEquals(400, send(http, "POST", "/config/sensors/bench/pin", "{\"name\": \"../escape\"}").statusCode());
                assertEquals(405, send(http, "GET", "/config/sensors/bench/pin", null).statusCode());

                // Off at run time: the recording stops; on again: a new one starts.
                HttpResponse<String> off = send(http, "PATCH", "/config/sensors/bench", "{\"recording\": false}");
                assertEquals(200, off.statusCode(), off.body());
                assertTrue(off.body().contains("\"recording\":false"), off.body());
                long recorded = counters.get(NodeCounter.RECORDED_MESSAGES);
                sensor.sendEvents(packets.get(0));
                sensor.flush();
                Thread.sleep(300);
                assertEquals(recorded, counters.get(NodeCounter.RECORDED_MESSAGES), "nothing recorded while off");
                assertEquals(200, send(http, "PATCH", "/config/sensors/bench", "{\"recording\": true}").statusCode());
                StreamingEndToEndTest.waitFor(() -> counters.get(NodeCounter.RECORDED_MESSAGES) == recorded + 1); // its hello
                assertEquals(400, send(http, "PATCH", "/config/sensors/bench", "{\"recording\": \"yes\"}").statusCode());
            }
            assertEquals(0, counters.get(NodeCounter.RECORDING_FAILURES) + counters.get(NodeCounter.RECORDING_DROPPED));
        }
        for (String name : List.of("incident-1", "incident-2")) {
            try (RecordingReader r = RecordingReader.open(folder.resolve("bench/pinned/" + name))) {
                long packetsRead = 0;
                long lastSequence = -1;
                for (RecordingReader.Item i; (i = r.next()) != null; ) {
                    if (i.envelope().hasEvents()) {
                        assertTrue(i.envelope().getEvents().getSequence() > lastSequence, "in order");
                        lastSequence = i.envelope().getEvents().getSequence();
                        packetsRead++;
                    }
                }
                assertEquals(List.of(), r.problems(), name);
                assertTrue(packetsRead > 50 && packetsRead < packets.size(), name + ": the newest part, " + packetsRead + " packets");
                assertEquals(packets.size() - 1, lastSequence, name + " ends with the last packet sent");
            }
        }
    }
}
