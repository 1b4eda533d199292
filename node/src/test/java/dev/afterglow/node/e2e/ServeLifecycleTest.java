package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.proto.v1.PixelFormat;
import java.io.BufferedReader;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/** The serve command in its own process: prints its effective configuration, serves, and stops cleanly on SIGTERM. */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class ServeLifecycleTest {

    @Test
    void shouldPrintConfigServeAndStopOnSigterm(@TempDir Path dir) throws Exception {
        Path config = dir.resolve("node.yaml");
        Files.writeString(config, """
                listen: {ingest-tcp-port: 0, ingest-udp-port: 0, subscriber-port: 0, http-port: 0}
                control: {enabled: true, token: "control-token-never-printed"}
                sensors: [{id: dock, width: 32, height: 24, frame-rate-hz: 50}]
                """);
        Process p = new ProcessBuilder(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-cp", System.getProperty("java.class.path"), "dev.afterglow.node.AfterglowCli", "serve", "--config", config.toString())
                .redirectErrorStream(true).start();
        try {
            serveAndStop(p);
        } finally {
            // Whatever happened above, no node process outlives the test.
            p.destroyForcibly();
            p.waitFor(10, TimeUnit.SECONDS);
        }
    }

    private static void serveAndStop(Process p) throws Exception {
        List<String> lines = new ArrayList<>();
        BufferedReader out = new BufferedReader(new InputStreamReader(p.getInputStream(), StandardCharsets.UTF_8));
        Pattern listening = Pattern.compile("afterglow: listening on 127\\.0\\.0\\.1 +sensors tcp:(\\d+) udp:(\\d+) +subscribers tcp:(\\d+)");
        Matcher m = null;
        for (String line; (line = out.readLine()) != null; ) {
            lines.add(line);
            m = listening.matcher(line);
            if (m.matches()) {
                break;
            }
        }
        assertTrue(m != null && m.matches(), String.join("\n", lines));
        String printed = String.join("\n", lines);
        assertTrue(printed.contains("effective configuration") && printed.contains("id: \"dock\""), printed);
        assertTrue(!printed.contains("control-token-never-printed") && printed.contains("<redacted>"), "secrets redacted: " + printed);
        int ingest = Integer.parseInt(m.group(1));
        int subscribers = Integer.parseInt(m.group(3));

        try (SubscriberClient sub = SubscriberClient.connect("127.0.0.1", subscribers, "dock", 0, PixelFormat.PIXEL_FORMAT_GRAY8);
                SensorClient sensor = SensorClient.connect("127.0.0.1", ingest, "dock", 32, 24, false)) {
            sub.setTimeoutMillis(10_000);
            EventBatch b = new EventBatch(4);
            long start = System.nanoTime();
            // Half a second of events: on a loaded machine the first frames may pass before the
            // subscription is in place, or be skipped as stale, so any frame on the grid will do.
            for (int k = 0; k < 25; k++) {
                StreamingEndToEndTest.paceRealTime(start, k * 20_000L + 1);
                b.reset(k * 20_000L);
                b.add(k, 1, k * 20_000L + 1, 1);
                sensor.sendEvents(b);
                sensor.flush();
            }
            long frameTime = sub.next().getFrameTimeUs();
            assertTrue(frameTime > 0 && frameTime % 20_000 == 0 && frameTime <= 480_001,
                    "the node serves frames on its 50 Hz grid: " + frameTime);

            StringBuilder rest = new StringBuilder();
            Thread drain = new Thread(() -> {
                try {
                    for (String line; (line = out.readLine()) != null; ) {
                        synchronized (rest) {
                            rest.append(line).append('\n');
                        }
                    }
                } catch (java.io.IOException ignored) {
                    // process gone
                }
            });
            drain.start();
            p.toHandle().destroy(); // SIGTERM, without closing our end of its output
            assertTrue(p.waitFor(20, TimeUnit.SECONDS), "stopped within 20 s");
            drain.join(5_000);
            assertTrue(rest.toString().contains("afterglow: stopping"), rest.toString());
            // The node closed the subscriber's connection on the way out.
            assertThrowsEnd(sub);
        }
    }

    private static void assertThrowsEnd(SubscriberClient sub) {
        try {
            while (true) {
                sub.next();
            }
        } catch (java.io.EOFException | java.net.SocketException expected) {
            return;
        } catch (Exception other) {
            throw new AssertionError("expected the connection to end, got " + other, other);
        }
    }
}
