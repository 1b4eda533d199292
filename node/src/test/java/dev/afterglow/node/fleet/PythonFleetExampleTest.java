package dev.afterglow.node.fleet;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The Python fleet example with a real client library (Debian's python3-confluent-kafka, on
 * librdkafka) against a real broker: its sensor produces straight to the event topic, a node in
 * the processing group applies every event, and its frame reader gets the node's frames from the
 * frame topic as numpy arrays. In CI (CI=true) missing tools fail the test; elsewhere it is skipped.
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class PythonFleetExampleTest {
    private static final Path PYTHON = Path.of("/usr/bin/python3");
    private static final Path PROTOC = Path.of("/usr/bin/protoc");

    @Test
    void pythonSensorFeedsTheGroupAndPythonReadsItsFrames(@TempDir Path dir) throws Exception {
        requireTools();
        Path root = Path.of("..").toAbsolutePath().normalize();
        Path protoDir = root.resolve("proto/src/main/proto");
        Path script = root.resolve("examples/python/afterglow_fleet.py");
        Path gen = Files.createDirectories(dir.resolve("gen"));
        run(List.of(PROTOC.toString(), "--python_out=" + gen, "-I" + protoDir,
                protoDir.resolve("afterglow/v1/afterglow.proto").toString()), gen, 30);
        try (KafkaTestBroker broker = KafkaTestBroker.start(dir);
                Admin admin = Admin.create(Map.of("bootstrap.servers", broker.bootstrap()))) {
            admin.createTopics(List.of(new NewTopic("afterglow.events", 2, (short) 1),
                    new NewTopic("afterglow.frames", 2, (short) 1))).all().get();
            NodeConfig config = NodeConfig.parse("""
                    listen: {ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: -1, http-port: -1}
                    warm-up: false
                    sensor-defaults: {frame-rate-hz: 20, latency-budget-ms: 2000, chain: 'high-pass(cutoff=3rad/s, contrast=0.2)'}
                    kafka: {bootstrap-servers: "%s", consume: true, frame-topic: afterglow.frames, member-name: py-member}
                    """.formatted(broker.bootstrap()), "test");
            try (AfterglowNode node = AfterglowNode.start(config)) {
                FleetEndToEndTest.waitFor("the member owns the partitions", 30,
                        () -> node.fleet().source().partitionsOwned() == 2);
                String sensorOut = run(List.of(PYTHON.toString(), script.toString(), "sensor", "--kafka", broker.bootstrap(),
                        "--sensor", "py-cam", "--seconds", "2"), gen, 60);
                Matcher sent = Pattern.compile("sensor py-cam: sent (\\d+) packets, (\\d+) events").matcher(sensorOut);
                assertTrue(sent.find(), sensorOut);
                long events = Long.parseLong(sent.group(2));
                FleetEndToEndTest.waitFor("every event applied", 30, () -> node.sensors().get("py-cam") != null
                        && node.sensors().get("py-cam").counters().get(NodeCounter.EVENTS_RECEIVED) == events);
                String framesOut = run(List.of(PYTHON.toString(), script.toString(), "frames", "--kafka", broker.bootstrap(),
                        "--sensor", "py-cam", "--count", "10", "--from-start"), gen, 60);
                List<String> frames = framesOut.lines().filter(l -> l.startsWith("frame ")).toList();
                assertEquals(10, frames.size(), framesOut);
                Pattern line = Pattern.compile("frame sensor=py-cam seq=\\d+ t_us=(\\d+) shape=\\(48, 64\\) dtype=uint8 .* member=py-member");
                long previous = -1;
                for (String f : frames) {
                    Matcher m = line.matcher(f);
                    assertTrue(m.matches(), f);
                    long t = Long.parseLong(m.group(1));
                    assertTrue(t > previous, "frames in order: " + framesOut);
                    previous = t;
                }
            }
        }
    }

    private static void requireTools() throws Exception {
        String missing = null;
        if (!Files.isExecutable(PYTHON) || !Files.isExecutable(PROTOC)) {
            missing = "python3 or protoc not found";
        } else {
            Process p = new ProcessBuilder(PYTHON.toString(), "-c", "import numpy, google.protobuf, confluent_kafka")
                    .redirectErrorStream(true).start();
            if (!p.waitFor(30, TimeUnit.SECONDS) || p.exitValue() != 0) {
                missing = "python3-confluent-kafka, python3-numpy or python3-protobuf not installed";
            }
        }
        if (missing != null) {
            if ("true".equals(System.getenv("CI"))) {
                throw new AssertionError("CI must provide the Python fleet example's tools: " + missing);
            }
            Assumptions.assumeTrue(false, "skipped outside CI: " + missing);
        }
    }

    private static String run(List<String> command, Path pythonPath, int timeoutS) throws Exception {
        ProcessBuilder pb = new ProcessBuilder(command).redirectErrorStream(true);
        pb.environment().put("PYTHONPATH", pythonPath.toString());
        Process p = pb.start();
        if (!p.waitFor(timeoutS, TimeUnit.SECONDS)) {
            p.destroyForcibly();
            throw new AssertionError("timed out: " + command);
        }
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertEquals(0, p.exitValue(), command + "\n" + out);
        return out;
    }
}
