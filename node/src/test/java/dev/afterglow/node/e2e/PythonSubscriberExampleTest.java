package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.config.NodeConfig;
import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs the Python subscriber example (examples/python) against a running node with Debian's
 * python3, python3-protobuf, python3-numpy and protoc. In CI (CI=true) missing tools fail the
 * test; elsewhere the test is skipped.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class PythonSubscriberExampleTest {
    @Test
    void pythonExampleShouldReceiveFramesAsNumpyArrays(@TempDir Path gen) throws Exception {
        PythonExamples.requireTools(List.of(), "");
        Path script = PythonExamples.script("afterglow_subscribe.py");
        PythonExamples.generate(gen);

        int w = 64;
        int h = 48;
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                sensors:
                  - {id: py-cam, width: %d, height: %d, frame-rate-hz: 50, latency-budget-ms: 2000}
                """.formatted(w, h), "test");
        List<EventBatch> packets = SceneEvents.packets(w, h, 8_000_000, 2_000, 9);
        try (AfterglowNode node = AfterglowNode.start(config)) {
            Thread sender = new Thread(() -> {
                try (SensorClient s = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "py-cam", w, h, false)) {
                    long start = System.nanoTime();
                    for (EventBatch b : packets) {
                        StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 2_000);
                        s.sendEvents(b);
                        s.flush();
                    }
                } catch (IOException | InterruptedException e) {
                    // the test ends the node while the sensor still streams
                }
            });
            sender.setDaemon(true);
            sender.start();
            String out = PythonExamples.run(List.of(PythonExamples.PYTHON.toString(), script.toString(), "--port", Integer.toString(node.subscriberPort()),
                    "--sensor", "py-cam", "--rate", "10", "--format", "log-f32", "--count", "5"), gen, 60);
            Pattern line = Pattern.compile("frame seq=(\\d+) t_us=(\\d+) shape=\\((\\d+), (\\d+)\\) dtype=float32 .*");
            List<String> frames = out.lines().filter(l -> l.startsWith("frame ")).toList();
            assertEquals(5, frames.size(), out);
            long previousT = -1;
            for (String f : frames) {
                Matcher m = line.matcher(f);
                assertTrue(m.matches(), f);
                assertEquals(h, Integer.parseInt(m.group(3)));
                assertEquals(w, Integer.parseInt(m.group(4)));
                long t = Long.parseLong(m.group(2));
                if (previousT >= 0) {
                    assertEquals(100_000, t - previousT, "10 Hz decimated from 50 Hz: 100 ms apart");
                }
                previousT = t;
            }
        }
    }
}
