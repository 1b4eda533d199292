package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.recording.RecordingReader;
import java.io.IOException;
import java.net.ServerSocket;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * A recording node killed with SIGKILL (no shutdown hook runs) in the middle of a stream: every
 * message it had recorded a flush interval before the kill reads back, and the reader ends cleanly,
 * at the end of the file or at the torn last record, never at a corrupt one. (A killed process
 * loses what it had not handed to the operating system; fsync, off here, guards against power
 * loss, which a test cannot cause.)
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class RecordingCrashTest {
    private static final int W = StreamingEndToEndTest.W;
    private static final int H = StreamingEndToEndTest.H;
    @TempDir
    Path dir;

    private static int freePort() throws IOException {
        try (ServerSocket s = new ServerSocket(0)) {
            return s.getLocalPort();
        }
    }

    private static double recordedMessages(int http) {
        try {
            String text = HttpClient.newHttpClient().send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + http + "/metrics")).build(),
                    HttpResponse.BodyHandlers.ofString()).body();
            return HttpEndpointsTest.sample(text, "afterglow_recording_messages_total", "sensor=\"bench\"");
        } catch (Exception e) {
            return -1;
        }
    }

    @Test
    void shouldKeepEveryFlushedRecordAfterKillNine() throws Exception {
        int ingest = freePort();
        int http = freePort();
        Path folder = dir.resolve("rec");
        Path config = Files.writeString(dir.resolve("node.yaml"), """
                listen: {ingest-tcp-port: %d, ingest-udp-port: -1, subscriber-port: -1, http-port: %d}
                warm-up: false
                sensors:
                  - {id: bench, width: %d, height: %d, latency-budget-ms: 5000, record: {folder: '%s', flush-ms: 100, fsync: false}}
                """.formatted(ingest, http, W, H, folder));
        Process node = new ProcessBuilder(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-cp", System.getProperty("java.class.path"), "dev.afterglow.node.AfterglowCli", "serve", "--config", config.toString())
                .redirectErrorStream(true).redirectOutput(dir.resolve("node.log").toFile()).start();
        AtomicBoolean streaming = new AtomicBoolean(true);
        Thread sender = null;
        SensorClient[] sensor = {null};
        double recordedBeforeKill;
        try {
            StreamingEndToEndTest.waitFor(() -> recordedMessages(http) >= 0);
            List<EventBatch> packets = SceneEvents.packets(W, H, 20_000_000, 1_000, 51);
            sensor[0] = SensorClient.connect("127.0.0.1", ingest, "bench", W, H, false);
            sender = new Thread(() -> {
                long start = System.nanoTime();
                try {
                    for (EventBatch b : packets) {
                        if (!streaming.get()) {
                            break;
                        }
                        StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 1_000);
                        sensor[0].sendEvents(b);
                        sensor[0].flush();
                    }
                } catch (Exception e) {
                    // the node was killed: the connection breaks
                }
            });
            sender.start();
            Thread.sleep(1_500);
            recordedBeforeKill = recordedMessages(http);
            assertTrue(recordedBeforeKill > 500, "recorded before the kill: " + recordedBeforeKill);
            Thread.sleep(400); // more than a flush interval (100 ms) and the recorder's poll (100 ms)
            node.destroyForcibly(); // SIGKILL on Linux
            assertTrue(node.waitFor(30, TimeUnit.SECONDS));
            assertEquals(137, node.exitValue(), "killed by SIGKILL (128 + 9)");
        } finally {
            streaming.set(false);
            node.destroyForcibly();
            if (sender != null) {
                sender.join(10_000);
            }
            if (sensor[0] != null) {
                try {
                    sensor[0].close();
                } catch (IOException gone) {
                    // the node was killed: the connection is already broken
                }
            }
        }
        long read = 0;
        try (RecordingReader r = RecordingReader.open(folder.resolve("bench"))) {
            for (RecordingReader.Item i; (i = r.next()) != null; ) {
                read++;
            }
            for (String p : r.problems()) {
                assertTrue(p.contains("torn record"), "only a torn last record, never a corrupt one: " + p);
            }
        }
        assertTrue(read >= recordedBeforeKill, "every message recorded 400 ms before the kill reads back: "
                + read + " read, " + recordedBeforeKill + " recorded by then");
    }
}
