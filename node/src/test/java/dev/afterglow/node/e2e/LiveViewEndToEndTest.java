package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import java.io.ByteArrayOutputStream;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpResponse;
import java.net.http.WebSocket;
import java.net.http.WebSocketHandshakeException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CompletionStage;
import java.util.concurrent.ConcurrentLinkedQueue;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * The live view on a real node on loopback: the page and its files, the WebSocket's binary frames
 * (documented header, shrunk size, a structured image, activity of both polarities) and JSON
 * stats while a paced sensor streams the parcel-line scene, and refusals of bad query parameters
 * before the upgrade.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class LiveViewEndToEndTest {
    /** Wider than 320, so the live image is shrunk by 2: 165 x 124. */
    private static final int W = 330;
    private static final int H = 248;
    private static final int FPS = 5;

    private static NodeConfig wideConfig() {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: -1, http-port: 0}
                sensors:
                  - {id: wide, width: %d, height: %d, frame-rate-hz: 50, latency-budget-ms: 2000}
                """.formatted(W, H), "test");
    }

    /** Collects whole messages (the client may deliver a message in parts). */
    private static final class Collector implements WebSocket.Listener {
        final ConcurrentLinkedQueue<byte[]> binary = new ConcurrentLinkedQueue<>();
        final ConcurrentLinkedQueue<Long> binaryAtNanos = new ConcurrentLinkedQueue<>();
        final ConcurrentLinkedQueue<String> text = new ConcurrentLinkedQueue<>();
        private final ByteArrayOutputStream partBinary = new ByteArrayOutputStream();
        private final StringBuilder partText = new StringBuilder();

        @Override
        public CompletionStage<?> onBinary(WebSocket ws, ByteBuffer data, boolean last) {
            byte[] b = new byte[data.remaining()];
            data.get(b);
            partBinary.write(b, 0, b.length);
            if (last) {
                binary.add(partBinary.toByteArray());
                binaryAtNanos.add(System.nanoTime());
                partBinary.reset();
            }
            ws.request(1);
            return null;
        }

        @Override
        public CompletionStage<?> onText(WebSocket ws, CharSequence data, boolean last) {
            partText.append(data);
            if (last) {
                text.add(partText.toString());
                partText.setLength(0);
            }
            ws.request(1);
            return null;
        }
    }

    @Test
    void shouldStreamShrunkFramesActivityAndStatsToAViewer() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 2_500_000, 2_000, 11);
        HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
        try (AfterglowNode node = AfterglowNode.start(wideConfig())) {
            assertFalse(node.liveViews().watching("wide"));
            Collector collector = new Collector();
            WebSocket ws = http.newWebSocketBuilder().connectTimeout(Duration.ofSeconds(5))
                    .buildAsync(URI.create("ws://127.0.0.1:" + node.httpPort() + "/live/ws?sensor=wide&fps=" + FPS), collector)
                    .get(10, TimeUnit.SECONDS);
            StreamingEndToEndTest.waitFor(() -> node.liveViews().watching("wide"));
            try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "wide", W, H, false)) {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 2_000);
                    sensor.sendEvents(b);
                    sensor.flush();
                }
            }
            var counters = node.sensors().get("wide").counters();
            StreamingEndToEndTest.waitFor(() -> collector.binary.size() >= 8);
            ws.sendClose(WebSocket.NORMAL_CLOSURE, "done").get(5, TimeUnit.SECONDS);
            StreamingEndToEndTest.waitFor(() -> !node.liveViews().watching("wide"));
            assertEquals(0, node.liveViews().count());

            List<byte[]> frames = new ArrayList<>(collector.binary);
            int w = W / 2;
            int h = H / 2;
            long lastSeq = 0;
            long lastTimeUs = Long.MIN_VALUE;
            boolean sawOn = false;
            boolean sawOff = false;
            int structured = 0;
            for (byte[] m : frames) {
                // Layout documented in LiveFrameCodec: "AGLV", version 1, factor, sequence, time, w, h, events.
                ByteBuffer v = ByteBuffer.wrap(m).order(ByteOrder.LITTLE_ENDIAN);
                assertEquals(0x564C4741, v.getInt(0), "magic");
                assertEquals(1, v.getShort(4), "version");
                assertEquals(2, v.getShort(6), "factor");
                assertEquals(w, v.getShort(24));
                assertEquals(h, v.getShort(26));
                assertEquals(32 + 2 * w * h, m.length);
                long seq = v.getLong(8);
                long timeUs = v.getLong(16);
                assertTrue(seq > lastSeq, "sequence " + seq + " after " + lastSeq);
                assertTrue(timeUs > lastTimeUs, "frame time " + timeUs + " after " + lastTimeUs);
                lastSeq = seq;
                lastTimeUs = timeUs;
                long events = v.getInt(28) & 0xFFFFFFFFL;
                int min = 255;
                int max = 0;
                for (int i = 0; i < w * h; i++) {
                    int g = m[32 + i] & 0xFF;
                    min = Math.min(min, g);
                    max = Math.max(max, g);
                }
                if (max - min > 50) {
                    structured++;
                }
                long netSum = 0;
                for (int i = 0; i < w * h; i++) {
                    byte a = m[32 + w * h + i];
                    sawOn |= a > 0;
                    sawOff |= a < 0;
                    netSum += Math.abs(a);
                }
                // Each event changes one block's net count by one, so |net| summed over blocks <= events.
                assertTrue(netSum <= events, "sum |ON-OFF| " + netSum + " > events " + events);
            }
            assertTrue(structured >= frames.size() / 2, structured + " of " + frames.size() + " frames show structure");
            assertTrue(sawOn && sawOff, "activity of both polarities: ON " + sawOn + ", OFF " + sawOff);
            assertTrue(counters.get(NodeCounter.LIVE_FRAMES_SENT) >= frames.size());
            // At most FPS frames per second of host time (plus one at each end and a little jitter).
            List<Long> at = new ArrayList<>(collector.binaryAtNanos);
            double spanS = (at.get(at.size() - 1) - at.get(0)) / 1e9;
            assertTrue(frames.size() <= FPS * spanS + 3, frames.size() + " frames in " + spanS + " s at fps " + FPS);

            ObjectMapper json = new ObjectMapper();
            List<JsonNode> stats = new ArrayList<>();
            for (String t : collector.text) {
                stats.add(json.readTree(t));
            }
            assertTrue(stats.size() >= 3, stats.size() + " stats messages");
            JsonNode busiest = stats.get(0);
            for (JsonNode s : stats) {
                assertEquals("stats", s.path("type").asText());
                if (s.path("eventsPerS").asDouble() > busiest.path("eventsPerS").asDouble()) {
                    busiest = s;
                }
            }
            assertTrue(busiest.path("eventsPerS").asDouble() > 0, "no event rate in " + collector.text);
            assertEquals("wide", busiest.path("sensor").asText());
            assertEquals(FPS, busiest.path("fps").asInt());
            assertEquals(w, busiest.path("liveWidth").asInt());
            assertEquals(h, busiest.path("liveHeight").asInt());
            assertEquals(50.0, busiest.path("frameRateHz").asDouble());
            assertEquals(node.sensors().get("wide").config().chain, busiest.path("chain").asText());
            JsonNode stages = busiest.path("stages");
            assertEquals(3, stages.size(), stages.toString());
            assertEquals("refractory", stages.path(0).path("name").asText());
            assertTrue(stages.path(0).path("params").has("period"), stages.toString());
            assertEquals("high-pass", stages.path(2).path("name").asText());
            assertTrue(busiest.path("latencyMs").path("arrivalToApplied").path("p50").asDouble() > 0);
            assertTrue(busiest.path("latencyMs").path("sensorToPublish").path("p99").asDouble() > 0);
        }
    }

    @Test
    void shouldRefuseBadQueryParametersBeforeTheUpgrade() throws Exception {
        HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
        try (AfterglowNode node = AfterglowNode.start(HttpEndpointsTest.config("gate"))) {
            int port = node.httpPort();
            // RFC 6455 section 4.2.2: a server that does not accept a handshake answers with an HTTP
            // error status; 400 Bad Request and 404 Not Found as in RFC 9110 section 15.5.
            record Case(String query, int status, String message) {
            }
            for (Case c : List.of(
                    new Case("sensor=nope", 404, "sensor=nope: unknown sensor"),
                    new Case("fps=10", 400, "sensor: missing"),
                    new Case("sensor=gate&fps=0", 400, "fps=0: outside 1..30"),
                    new Case("sensor=gate&fps=31", 400, "fps=31: outside 1..30"),
                    new Case("sensor=gate&fps=ten", 400, "fps=ten: not an integer; expected 1..30"))) {
                HttpResponse<String> r = HttpEndpointsTest.get(http, port, "/live/ws?" + c.query());
                assertEquals(c.status(), r.statusCode(), c.query());
                assertTrue(r.body().startsWith(c.message()), c.query() + " -> " + r.body());
                ExecutionException e = assertThrows(ExecutionException.class, () -> http.newWebSocketBuilder()
                        .buildAsync(URI.create("ws://127.0.0.1:" + port + "/live/ws?" + c.query()), new WebSocket.Listener() { })
                        .get(10, TimeUnit.SECONDS));
                WebSocketHandshakeException refused = assertInstanceOf(WebSocketHandshakeException.class, e.getCause());
                assertEquals(c.status(), refused.getResponse().statusCode(), c.query());
            }
            assertEquals(0, node.liveViews().count());
            // The node still serves a good request afterwards.
            WebSocket ok = http.newWebSocketBuilder()
                    .buildAsync(URI.create("ws://127.0.0.1:" + port + "/live/ws?sensor=gate"), new WebSocket.Listener() { })
                    .get(10, TimeUnit.SECONDS);
            StreamingEndToEndTest.waitFor(() -> node.liveViews().watching("gate"));
            ok.abort();
            StreamingEndToEndTest.waitFor(() -> !node.liveViews().watching("gate"));
        }
    }

    @Test
    void shouldServeThePageAndItsFilesWithoutCaching() throws Exception {
        HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
        try (AfterglowNode node = AfterglowNode.start(HttpEndpointsTest.config("gate"))) {
            int port = node.httpPort();
            for (String[] file : new String[][] {
                    {"/live", "text/html; charset=utf-8", "/live/live.js"},
                    {"/live/live.js", "text/javascript; charset=utf-8", "/live/ws?"},
                    {"/live/live.css", "text/css; charset=utf-8", "--bg"}}) {
                HttpResponse<String> r = HttpEndpointsTest.get(http, port, file[0]);
                assertEquals(200, r.statusCode(), file[0]);
                // Media types text/html, text/javascript (RFC 9239) and text/css.
                assertEquals(file[1], r.headers().firstValue("content-type").orElse(""), file[0]);
                assertEquals("no-cache", r.headers().firstValue("cache-control").orElse(""), file[0]);
                assertTrue(r.body().contains(file[2]), file[0]);
                // Works offline: nothing is loaded from another host.
                assertFalse(r.body().contains("http://") || r.body().contains("https://") || r.body().contains("//cdn"),
                        file[0] + " refers to another host");
            }
            assertEquals(404, HttpEndpointsTest.get(http, port, "/live/other.js").statusCode());
        }
    }
}
