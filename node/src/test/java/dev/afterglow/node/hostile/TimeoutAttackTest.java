package dev.afterglow.node.hostile;

import static org.junit.jupiter.api.Assertions.assertAll;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Subscribe;
import java.io.IOException;
import java.io.InputStream;
import java.net.Socket;
import java.net.SocketException;
import java.net.SocketTimeoutException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.DisplayName;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.extension.RegisterExtension;

/**
 * Issue item 9: the node had no timeouts, so connections trickling a byte a second, subscriber
 * connections that never send a Subscribe, and HTTP requests whose headers never end were kept
 * forever. The timeouts here are the contract's settings, shortened so the suite stays fast; a
 * node that predates these settings refuses this configuration at start, so every test here then
 * fails at start.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
class TimeoutAttackTest {
    static final double BUDGET_MS = 1000;
    static final int HELLO_TIMEOUT_MS = 1_000;
    static final int MESSAGE_TIMEOUT_MS = 2_000;
    static final int IDLE_TIMEOUT_S = 3;
    static final int HTTP_REQUEST_TIMEOUT_MS = 2_000;
    static final int STALL_TIMEOUT_MS = 2_000;
    /** How much later than its timeout the node may close a connection on this shared, loaded machine. */
    static final int SLACK_MS = 2_000;
    static final String YAML = """
            listen: {address: 127.0.0.1, ingest-tcp-port: 0, ingest-udp-port: 0, subscriber-port: 0, http-port: 0}
            limits: {max-sensors: 64, hello-timeout-ms: %d, message-timeout-ms: %d, idle-timeout-s: %d,
                     http-request-timeout-ms: %d, subscriber-stall-timeout-ms: %d, subscriber-high-water-bytes: 1048576}
            sensor-defaults: {frame-rate-hz: 100, latency-budget-ms: %s}
            """.formatted(HELLO_TIMEOUT_MS, MESSAGE_TIMEOUT_MS, IDLE_TIMEOUT_S, HTTP_REQUEST_TIMEOUT_MS, STALL_TIMEOUT_MS, BUDGET_MS);

    @RegisterExtension
    static final NodeFixture FIXTURE = new NodeFixture(YAML, 128, BUDGET_MS);

    private static LegitRun legit() throws Exception {
        return LegitRun.start(FIXTURE, FIXTURE.freshId("legit"), LegitSensor.Transport.TCP, null);
    }

    @Test
    @DisplayName("item 9: ingest connections trickling a byte a second, or silent after their hello, are closed with ErrorReport timeout")
    void shouldCloseTricklingAndSilentIngestConnections() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = legit()) {
            long from = legit.startWindow();
            Thread.sleep(500);
            List<String> problems = new ArrayList<>();
            try (ConnectionHerd neverHello = new ConnectionHerd(node.ingestTcpPort, 20, 2, 20);
                    ConnectionHerd slowMessage = new ConnectionHerd(node.ingestTcpPort, 5, 3, 5);
                    ConnectionHerd silent = new ConnectionHerd(node.ingestTcpPort, 5, 4, 5)) {
                byte[] hello = Wire.delimited(Wire.hello("never-said", 8, 8, null));
                for (int i = 0; i < 5; i++) {
                    slowMessage.send(i, Wire.delimited(Wire.hello(FIXTURE.freshId("trickle"), 8, 8, null)));
                    silent.send(i, Wire.delimited(Wire.hello(FIXTURE.freshId("silent"), 8, 8, null)));
                }
                byte[] packet = Wire.delimited(Wire.packet("", 0, 1_000, 1, Wire.event(0, 1, 1, true)));
                long trickleStart = System.nanoTime();
                long silentStart = System.nanoTime();
                long deadline = silentStart + TimeUnit.MILLISECONDS.toNanos(IDLE_TIMEOUT_S * 1000L + SLACK_MS + 500);
                while (System.nanoTime() < deadline && neverHello.open() + slowMessage.open() + silent.open() > 0) {
                    neverHello.trickle(hello);
                    slowMessage.trickle(packet);
                    Thread.sleep(1_000);
                }
                problems.addAll(timedOut("never-finished hello", neverHello, -1, HELLO_TIMEOUT_MS, true));
                problems.addAll(timedOut("trickled message", slowMessage, trickleStart, MESSAGE_TIMEOUT_MS, true));
                problems.addAll(timedOut("silent after hello", silent, silentStart, IDLE_TIMEOUT_S * 1000, true));
            }
            Thread.sleep(1_000);
            legit.finish(from, legit.nowUs());
            assertAll(legit::assertUnharmed,
                    () -> assertTrue(problems.isEmpty(), String.join("\n", problems)),
                    () -> assertTrue(legit.nodeDelta("afterglow_connections_timed_out_total") >= 30,
                            "afterglow_connections_timed_out_total moved by " + legit.nodeDelta("afterglow_connections_timed_out_total")));
        }
    }

    @Test
    @DisplayName("item 9: 1000 subscriber connections that never send a Subscribe are closed with ErrorReport timeout")
    void shouldCloseIdleSubscriberConnections() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = legit()) {
            long from = legit.startWindow();
            Thread.sleep(500);
            List<String> problems;
            // 25 from each of 40 addresses: under any per-address connection limit, so only the timeout can close them.
            try (ConnectionHerd idle = new ConnectionHerd(node.subscriberPort, 1000, 10, 25)) {
                LegitRun.waitFor(() -> idle.open() == 0, HELLO_TIMEOUT_MS + SLACK_MS + 2_000);
                problems = timedOut("idle subscriber connection", idle, -1, HELLO_TIMEOUT_MS, true);
            }
            Thread.sleep(1_000);
            legit.finish(from, legit.nowUs());
            assertAll(legit::assertUnharmed,
                    () -> assertTrue(problems.isEmpty(), String.join("\n", problems)),
                    () -> assertTrue(legit.nodeDelta("afterglow_connections_timed_out_total") >= 1000,
                            "afterglow_connections_timed_out_total moved by " + legit.nodeDelta("afterglow_connections_timed_out_total")));
        }
    }

    @Test
    @DisplayName("item 9: 2000 HTTP requests whose headers trickle in are closed; /metrics keeps answering")
    void shouldCloseSlowHttpHeaders() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = legit()) {
            long from = legit.startWindow();
            Thread.sleep(500);
            List<String> problems;
            // 25 from each of 80 addresses: under any per-address connection limit.
            try (ConnectionHerd slow = new ConnectionHerd(node.httpPort, 2000, 60, 25)) {
                slow.sendAll("GET /metrics HTTP/1.1\r\nHost: 127.0.0.1\r\n".getBytes(StandardCharsets.US_ASCII));
                byte[] header = "X-Slow: aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa\r\n".getBytes(StandardCharsets.US_ASCII);
                long deadline = System.nanoTime() + TimeUnit.MILLISECONDS.toNanos(HTTP_REQUEST_TIMEOUT_MS + SLACK_MS + 2_000);
                while (System.nanoTime() < deadline && slow.open() > 0) {
                    slow.trickle(header);
                    Thread.sleep(1_000);
                }
                problems = timedOut("slow HTTP request", slow, -1, HTTP_REQUEST_TIMEOUT_MS, false);
                for (ConnectionHerd.Conn c : slow.conns) {
                    String got = new String(c.receivedBytes(), StandardCharsets.US_ASCII);
                    // RFC 9110 section 15.5.9: 408 Request Timeout is the answer to a request not completed in time.
                    if (!got.isEmpty() && !got.startsWith("HTTP/1.1 408")) {
                        problems.add("a slow HTTP request was answered " + got.lines().findFirst().orElse(""));
                        break;
                    }
                }
            }
            Thread.sleep(1_000);
            legit.finish(from, legit.nowUs());
            assertAll(legit::assertUnharmed,
                    () -> assertTrue(problems.isEmpty(), String.join("\n", problems)),
                    () -> assertTrue(legit.nodeDelta("afterglow_connections_timed_out_total") >= 2000,
                            "afterglow_connections_timed_out_total moved by " + legit.nodeDelta("afterglow_connections_timed_out_total")));
        }
    }

    @Test
    @DisplayName("item 8/9: a subscriber that stops reading is disconnected after subscriber-stall-timeout-ms")
    void shouldDropSubscriberThatStopsReading() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = legit()) {
            long from = legit.startWindow();
            Thread.sleep(500);
            boolean closed;
            try (Socket stalled = new Socket()) {
                stalled.setReceiveBufferSize(4096);
                stalled.bind(new java.net.InetSocketAddress(Attacker.address(5), 0));
                stalled.connect(new java.net.InetSocketAddress(java.net.InetAddress.getLoopbackAddress(), node.subscriberPort), 5_000);
                Attacker.send(stalled, Envelope.newBuilder().setSchemaVersion(Wire.SCHEMA).setSubscribe(Subscribe.newBuilder()
                        .setSensorId(legit.sensor.id).setFormat(PixelFormat.PIXEL_FORMAT_LOG_F32)).build());
                // Filling the 1 MiB high-water mark takes well under a second at 100 frames of 77 KB per second.
                Thread.sleep(STALL_TIMEOUT_MS + SLACK_MS + 1_000);
                closed = drainedToEnd(stalled, 3_000);
            }
            legit.finish(from, legit.nowUs());
            boolean closedFinal = closed;
            assertAll(legit::assertUnharmed,
                    () -> assertTrue(closedFinal, "the node kept the stalled subscriber's connection open"),
                    () -> assertTrue(legit.nodeDelta("afterglow_subscribers_dropped_total") >= 1,
                            "afterglow_subscribers_dropped_total moved by " + legit.nodeDelta("afterglow_subscribers_dropped_total")));
        }
    }

    /**
     * Reads what is buffered; true if the stream then ends (or is reset) within {@code millis}, false
     * if it is still open then (a node that keeps sending to a reader never lets a read time out, so
     * the deadline is on the whole drain).
     */
    private static boolean drainedToEnd(Socket s, int millis) throws IOException {
        long deadline = System.nanoTime() + millis * 1_000_000L;
        InputStream in = s.getInputStream();
        byte[] buf = new byte[1 << 16];
        try {
            while (true) {
                long left = (deadline - System.nanoTime()) / 1_000_000;
                if (left <= 0) {
                    return false;
                }
                s.setSoTimeout((int) left);
                if (in.read(buf) < 0) {
                    return true;
                }
            }
        } catch (SocketTimeoutException open) {
            return false;
        } catch (SocketException reset) {
            return true;
        }
    }

    /**
     * What is wrong with the herd's connections: each must have been closed by the node within
     * {@code timeoutMs + SLACK_MS} of {@code sinceNanos} (-1: of its own opening), and, with
     * {@code report}, must have received an ErrorReport with code {@code timeout} first.
     */
    private static List<String> timedOut(String what, ConnectionHerd herd, long sinceNanos, int timeoutMs, boolean report) {
        List<String> out = new ArrayList<>();
        int open = 0;
        int late = 0;
        int unreported = 0;
        long slowestMs = 0;
        String example = null;
        for (ConnectionHerd.Conn c : herd.conns) {
            if (!c.closed()) {
                open++;
                continue;
            }
            long since = sinceNanos < 0 ? c.openedNanos : sinceNanos;
            long ms = c.closedNanos < 0 ? 0 : (c.closedNanos - since) / 1_000_000;
            slowestMs = Math.max(slowestMs, ms);
            if (ms > timeoutMs + SLACK_MS) {
                late++;
            }
            if (report) {
                String code = null;
                try {
                    List<Envelope> got = Wire.readAll(c.receivedBytes());
                    code = got.size() == 1 && got.get(0).hasError() ? got.get(0).getError().getCode() : String.valueOf(got);
                } catch (IOException e) {
                    code = "unparsable: " + e;
                }
                if (!"timeout".equals(code)) {
                    unreported++;
                    example = example == null ? (c.refusedAtOpen != null ? "refused at open: " + c.refusedAtOpen : code) : example;
                }
            }
        }
        if (open > 0) {
            out.add(what + ": " + open + " of " + herd.conns.size() + " still open after the timeout of " + timeoutMs + " ms");
        }
        if (late > 0) {
            out.add(what + ": " + late + " closed later than " + (timeoutMs + SLACK_MS) + " ms (slowest " + slowestMs + " ms)");
        }
        if (unreported > 0) {
            out.add(what + ": " + unreported + " closed without ErrorReport timeout, e.g. " + example);
        }
        return out;
    }
}
