package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.DefaultChains;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.ConfigException;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.SensorFrame;
import com.google.protobuf.ByteString;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * Run-time settings over HTTP on a live node: off by default, bearer token when configured, a
 * change applied before the next frame (checked bit for bit against the new chain run in this
 * process), and invalid requests refused with a message while nothing changes.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class SensorSettingsEndpointTest {
    private static final int W = 64;
    private static final int H = 48;
    private static final String CHAIN = "refractory(period=1ms) | background-activity(window=10ms) | high-pass(cutoff=3rad/s, contrast=0.2)";
    private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
    private final ObjectMapper json = new ObjectMapper();

    private static NodeConfig config(String control) {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                control: %s
                sensors:
                  - {id: belt, width: %d, height: %d, chain: "%s", frame-rate-hz: 50, latency-budget-ms: 5000}
                """.formatted(control, W, H, CHAIN), "test");
    }

    private HttpResponse<String> send(AfterglowNode node, String method, String path, String body, String token) throws Exception {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + node.httpPort() + path))
                .timeout(Duration.ofSeconds(10))
                .method(method, body == null ? HttpRequest.BodyPublishers.noBody() : HttpRequest.BodyPublishers.ofString(body));
        if (token != null) {
            b.header("Authorization", "Bearer " + token);
        }
        return http.send(b.build(), HttpResponse.BodyHandlers.ofString());
    }

    @Test
    void shouldBeOffUnlessEnabled() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(config("{}"))) {
            HttpResponse<String> r = send(node, "GET", "/config/sensors/belt", null, null);
            assertEquals(403, r.statusCode());
            assertTrue(r.body().contains("control.enabled"), r.body());
            assertEquals(403, send(node, "PATCH", "/config/sensors/belt", "{\"frame-rate-hz\": 10}", null).statusCode());
            assertEquals(50.0, node.sensors().get("belt").config().frameRateHz);
        }
    }

    @Test
    void shouldRequireTheBearerTokenWhenOneIsSet() throws Exception {
        String token = "a-long-enough-test-token";
        try (AfterglowNode node = AfterglowNode.start(config("{enabled: true, token: " + token + "}"))) {
            HttpResponse<String> none = send(node, "GET", "/config/sensors/belt", null, null);
            assertEquals(401, none.statusCode());
            // RFC 6750 section 3: a 401 for a bearer-protected resource carries WWW-Authenticate: Bearer.
            assertTrue(none.headers().firstValue("www-authenticate").orElse("").startsWith("Bearer"));
            assertEquals(401, send(node, "GET", "/config/sensors/belt", null, "wrong-token-of-some-length").statusCode());
            HttpResponse<String> ok = send(node, "GET", "/config/sensors/belt", null, token);
            assertEquals(200, ok.statusCode());
            assertEquals(ChainSpec.parse(CHAIN).toString(), json.readTree(ok.body()).path("chain").asText());
            HttpResponse<String> all = send(node, "GET", "/config/sensors", null, token);
            assertEquals("belt", json.readTree(all.body()).path(0).path("id").asText());
        }
    }

    @Test
    void shouldRefuseAnOpenEndpointOffLoopbackAndShortTokens() {
        ConfigException open = org.junit.jupiter.api.Assertions.assertThrows(ConfigException.class,
                () -> NodeConfig.parse("listen: {address: 0.0.0.0}\ncontrol: {enabled: true}", "test"));
        assertTrue(open.getMessage().contains("needs control.token"), open.getMessage());
        ConfigException shortToken = org.junit.jupiter.api.Assertions.assertThrows(ConfigException.class,
                () -> NodeConfig.parse("control: {enabled: true, token: abc}", "test"));
        assertTrue(shortToken.getMessage().contains("shorter than 16"), shortToken.getMessage());
    }

    @Test
    void shouldApplyAChangeBeforeTheNextFrame() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 600_000, 1_000, 21);
        int half = packets.size() / 2;
        List<EventBatch> first = packets.subList(0, half);
        List<EventBatch> second = packets.subList(half, packets.size());
        long firstEvents = first.stream().mapToLong(b -> b.size).sum();
        try (AfterglowNode node = AfterglowNode.start(config("{enabled: true}"));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "belt", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32);
                SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "belt", W, H, false)) {
            sub.setTimeoutMillis(20_000);
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 1);
            SensorPipeline pipeline = node.sensors().get("belt");
            stream(sensor, first);
            StreamingEndToEndTest.waitFor(() -> pipeline.counters().get(NodeCounter.EVENTS_RECEIVED) == firstEvents);
            pipeline.loop().submit(() -> { }).get(); // the pipeline has finished the last packet and its frames
            long before = pipeline.counters().get(NodeCounter.FRAMES_PUBLISHED);
            long lastBefore = 0;
            for (long i = 0; i < before; i++) {
                lastBefore = sub.next().getFrameTimeUs();
            }

            HttpResponse<String> r = send(node, "PATCH", "/config/sensors/belt",
                    "{\"frame-rate-hz\": 100, \"set\": {\"high-pass.cutoff\": \"2Hz\"}}", null);
            assertEquals(200, r.statusCode(), r.body());
            JsonNode answer = json.readTree(r.body());
            assertEquals(100.0, answer.path("frame-rate-hz").asDouble());
            assertTrue(answer.path("chain-restarted").asBoolean());
            String changed = answer.path("chain").asText();
            // 2 Hz = 4*pi rad/s (angular frequency, common practice), printed in canonical rad/s.
            assertTrue(changed.contains("high-pass(cutoff=12.566"), changed);
            assertEquals(changed, pipeline.config().chainSpec().toString());

            stream(sensor, second);
            List<IntensityFrame> after = new ArrayList<>();
            for (int i = 0; i < 20; i++) {
                after.add(sub.next());
            }
            // Old rate: 20 ms grid up to the change; the next frame is the next grid time, then 10 ms apart.
            assertEquals(0, lastBefore % 20_000);
            assertEquals(lastBefore + 20_000, after.get(0).getFrameTimeUs());
            for (int i = 1; i < after.size(); i++) {
                assertEquals(after.get(i - 1).getFrameTimeUs() + 10_000, after.get(i).getFrameTimeUs(), "frame " + i);
            }
            // The new chain starts blank and sees exactly the events sent after the change.
            StreamingEndToEndTest.assertEqualToInProcessChain(changed, second, after);
        }
    }

    @Test
    void shouldRefuseInvalidChangesWithAMessageAndChangeNothing() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(config("{enabled: true}"))) {
            SensorPipeline pipeline = node.sensors().get("belt");
            var configBefore = pipeline.config();
            var chainBefore = pipeline.chain();
            String[][] cases = {
                    {"{\"set\": {\"high-pass.cutoff\": \"-1rad/s\"}}", "high-pass.cutoff=-1rad/s < "},
                    {"{\"frame-rate-hz\": 5000, \"set\": {\"high-pass.cutoff\": \"2Hz\"}}", "belt.frame-rate-hz=5000.0 > 1000"},
                    {"{\"frame-rate-hz\": \"fast\"}", "frame-rate-hz=\"fast\" is not a number"},
                    {"{\"chain\": \"high-pass | refractory\"}", "belt.chain: "},
                    {"{\"set\": {\"median.size\": \"3\"}}", "no stage median in the chain"},
                    {"{\"set\": {\"refractory.window\": \"3ms\"}}", "refractory.window: unknown parameter"},
                    {"{\"colour\": \"blue\"}", "unknown setting 'colour'"},
                    {"[1, 2]", "must be a JSON object"},
                    {"{not json", "not valid JSON"},
            };
            for (String[] c : cases) {
                HttpResponse<String> r = send(node, "PATCH", "/config/sensors/belt", c[0], null);
                assertEquals(400, r.statusCode(), c[0] + " -> " + r.body());
                assertTrue(r.body().contains(c[1]), c[0] + " -> " + r.body());
            }
            assertEquals(404, send(node, "PATCH", "/config/sensors/nobody", "{}", null).statusCode());
            HttpResponse<String> put = send(node, "PUT", "/config/sensors/belt", "{}", null);
            assertEquals(405, put.statusCode());
            assertEquals("GET, PATCH", put.headers().firstValue("allow").orElse(""));
            assertSame(configBefore, pipeline.config());
            assertSame(chainBefore, pipeline.chain());
            assertEquals(ChainSpec.parse(CHAIN).toString(),
                    json.readTree(send(node, "GET", "/config/sensors/belt", null, null).body()).path("chain").asText());
        }
    }

    @Test
    void shouldPickTheAutomaticChainByWhetherTheSensorSendsFrames() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                control: {enabled: true}
                sensor-defaults: {chain: auto}
                sensors:
                  - {id: listed, width: %d, height: %d}
                """.formatted(W, H), "test");
        try (AfterglowNode node = AfterglowNode.start(config)) {
            String eventsOnly = DefaultChains.forSensor(false).toString();
            String withFrames = DefaultChains.forSensor(true).toString();
            JsonNode before = json.readTree(send(node, "GET", "/config/sensors/listed", null, null).body());
            assertEquals(eventsOnly, before.path("chain").asText(), "before any hello: the events-only default");
            assertTrue(before.path("chain-automatic").asBoolean());
            try (SensorClient framed = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "listed", W, H, true);
                    SensorClient plain = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "unlisted", W, H, false)) {
                framed.flush();
                plain.flush();
                StreamingEndToEndTest.waitFor(() -> node.sensors().get("unlisted") != null
                        && node.sensors().get("listed").chain().spec().toString().equals(withFrames));
                assertEquals(withFrames, json.readTree(send(node, "GET", "/config/sensors/listed", null, null).body())
                        .path("chain").asText(), "hello with sends_frames: the fusion default");
                SensorPipeline unlisted = node.sensors().get("unlisted");
                unlisted.loop().submit(() -> { }).get();
                assertEquals(eventsOnly, unlisted.chain().spec().toString(), "hello without frames: the events-only default");
                // A frame from a sensor whose hello said nothing of frames: it sends them after all.
                plain.sendFrame(SensorFrame.newBuilder().setSensorId("unlisted").setExposureStartUs(1_000).setExposureEndUs(2_000)
                        .setWidth(W).setHeight(H).setBitDepth(8).setPixels(ByteString.copyFrom(new byte[W * H])).build());
                plain.flush();
                StreamingEndToEndTest.waitFor(() -> unlisted.chain().spec().toString().equals(withFrames));
                // A chain set over HTTP stays, frames or not.
                HttpResponse<String> set = send(node, "PATCH", "/config/sensors/listed", "{\"chain\": \"" + CHAIN + "\"}", null);
                assertEquals(200, set.statusCode(), set.body());
                assertTrue(!json.readTree(set.body()).path("chain-automatic").asBoolean());
                assertEquals(ChainSpec.parse(CHAIN).toString(), node.sensors().get("listed").chain().spec().toString());
            }
        }
    }

    private static void stream(SensorClient sensor, List<EventBatch> packets) throws Exception {
        long start = System.nanoTime() - packets.get(0).timeBaseUs * 1000;
        for (EventBatch b : packets) {
            StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 1_000);
            sensor.sendEvents(b);
            sensor.flush();
        }
    }
}
