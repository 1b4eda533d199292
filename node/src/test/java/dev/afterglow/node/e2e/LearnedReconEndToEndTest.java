package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.learned.TestModels;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.ConfigException;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Provenance;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The learned reconstruction running live in a real node on loopback, from the chain syntax: a
 * sensor streams in real time, a subscriber gets every frame with the inference time and the
 * model's identity in its provenance, the pixels equal the same chain run in this process, and the
 * node's metrics count the inferences. A model that is missing or broken stops the node from
 * starting; over HTTP a client cannot point the node at a new model file.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class LearnedReconEndToEndTest {
    private static final int W = 64; // the size StreamingEndToEndTest.assertEqualToInProcessChain compares
    private static final int H = 48;
    @TempDir
    Path dir;

    private static String chain(Path model) {
        return "refractory(period=100us) | learned-recon(model=\"" + model + "\", rate=25Hz, threads=1)";
    }

    private static NodeConfig config(String chain, String extra) {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                %s
                sensors:
                  - {id: ember, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 5000,
                     chain: '%s'}
                """.formatted(extra, W, H, chain), "test");
    }

    @Test
    void shouldPublishFramesWithInferenceTimeAndModelInTheirProvenance() throws Exception {
        Path model = TestModels.tiny(dir);
        // The model's identity: its own name and the first 12 hex digits of the file's SHA-256 (FIPS 180-4,
        // computed here by the JDK's MessageDigest).
        String sha = HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(Files.readAllBytes(model)));
        String identity = "tiny-contract@" + sha.substring(0, 12);
        List<EventBatch> packets = SceneEvents.packets(W, H, 800_000, 1_000, 17);
        try (AfterglowNode node = AfterglowNode.start(config(chain(model), ""));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "ember", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32)) {
            sub.setTimeoutMillis(20_000);
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "ember", W, H, false)) {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 1_000);
                    sensor.sendEvents(b);
                    sensor.flush();
                }
            }
            long lastEventUs = packets.get(packets.size() - 1).timeUs(packets.get(packets.size() - 1).size - 1);
            int expectedFrames = (int) (lastEventUs / 10_000);
            List<IntensityFrame> frames = new ArrayList<>();
            for (int i = 0; i < expectedFrames; i++) {
                frames.add(sub.next());
            }
            int inferences = 0;
            long previousInferenceUs = -1;
            for (IntensityFrame f : frames) {
                Provenance p = f.getProvenance();
                assertEquals(identity, p.getModel(), "model identity in frame " + f.getSequence());
                assertTrue(p.getInferenceNs() >= 0 && p.getInferenceNs() <= p.getReadoutNs(),
                        "inference time is part of the readout: " + p.getInferenceNs() + " <= " + p.getReadoutNs());
                if (p.getInferenceNs() > 0) {
                    if (previousInferenceUs >= 0) {
                        // rate 25 Hz: a window is 40 ms; with frames every 10 ms every fourth frame infers
                        assertEquals(40_000, f.getFrameTimeUs() - previousInferenceUs, "frame " + f.getSequence());
                    }
                    previousInferenceUs = f.getFrameTimeUs();
                    inferences++;
                }
            }
            assertTrue(inferences >= expectedFrames / 4 - 1 && inferences <= expectedFrames / 4 + 1,
                    inferences + " inferences in " + expectedFrames + " frames");
            // Pixels: bit for bit the same chain run in this process on the same events, read out at the same times.
            StreamingEndToEndTest.assertEqualToInProcessChain(chain(model), packets, frames);

            var counters = node.sensors().get("ember").counters();
            assertEquals(inferences, counters.get(NodeCounter.INFERENCES));
            assertEquals(frames.size() - inferences, counters.get(NodeCounter.INFERENCE_REPEATS));
            assertEquals(inferences, node.sensors().get("ember").inferenceLatency().count());
            HttpResponse<String> metrics = HttpEndpointsTest.get(HttpClient.newHttpClient(), node.httpPort(), "/metrics");
            String text = metrics.body();
            assertEquals(inferences, HttpEndpointsTest.sample(text, "afterglow_inference_runs_total", "sensor=\"ember\""));
            assertEquals(inferences, HttpEndpointsTest.sample(text, "afterglow_latency_inference_samples_total", "sensor=\"ember\""));
            double p50 = HttpEndpointsTest.sample(text, "afterglow_latency_inference_seconds", "sensor=\"ember\"", "quantile=\"0.5\"");
            assertTrue(p50 > 0 && p50 < 5, "median inference time " + p50 + " s:\n" + text);
        }
    }

    @Test
    void shouldNotStartWithAMissingOrBrokenModel() throws Exception {
        Path missing = dir.resolve("absent.onnx");
        ConfigException none = assertThrows(ConfigException.class, () -> AfterglowNode.start(config(chain(missing), "")));
        assertTrue(none.getMessage().startsWith("sensor ember: chain: model " + missing + ": no such file"), none.getMessage());
        Path broken = TestModels.copy("refused/bins-mismatch.onnx", dir);
        ConfigException shape = assertThrows(ConfigException.class, () -> AfterglowNode.start(config(chain(broken), "")));
        assertTrue(shape.getMessage().contains("input `voxels` is [1, 3, -1, -1]; expected [1, 5, H, W]"), shape.getMessage());
        // The same for the chain of unlisted sensors: refused at start, not at each sensor's hello.
        ConfigException defaults = assertThrows(ConfigException.class, () -> AfterglowNode.start(NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: -1}
                sensor-defaults: {chain: 'learned-recon(model="%s")'}
                """.formatted(missing), "test")));
        assertTrue(defaults.getMessage().startsWith("sensor-defaults.chain: model " + missing), defaults.getMessage());
    }

    @Test
    void shouldKeepNewModelFilesOutOfTheHttpSettings() throws Exception {
        Path model = TestModels.tiny(dir);
        Path other = TestModels.copy(TestModels.TINY, Files.createDirectories(dir.resolve("other")));
        HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
        try (AfterglowNode node = AfterglowNode.start(config(chain(model), "control: {enabled: true}"))) {
            URI uri = URI.create("http://127.0.0.1:" + node.httpPort() + "/config/sensors/ember");
            HttpResponse<String> refused = http.send(HttpRequest.newBuilder(uri).method("PATCH",
                    HttpRequest.BodyPublishers.ofString("{\"set\": {\"learned-recon.model\": \"" + other + "\"}}")).build(),
                    HttpResponse.BodyHandlers.ofString());
            assertEquals(400, refused.statusCode(), refused.body());
            assertTrue(refused.body().contains("learned-recon.model=" + other + ": over HTTP only builtin or a model file already in effect"),
                    refused.body());
            HttpResponse<String> rate = http.send(HttpRequest.newBuilder(uri).method("PATCH",
                    HttpRequest.BodyPublishers.ofString("{\"set\": {\"learned-recon.rate\": \"10Hz\"}}")).build(),
                    HttpResponse.BodyHandlers.ofString());
            assertEquals(200, rate.statusCode(), rate.body());
            assertTrue(rate.body().contains("rate=10Hz"), rate.body());
        }
    }
}
