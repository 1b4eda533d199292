package dev.afterglow.node.fleet;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.e2e.PythonExamples;
import dev.afterglow.node.stats.NodeCounter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
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
    @Test
    void pythonSensorFeedsTheGroupAndPythonReadsItsFrames(@TempDir Path dir) throws Exception {
        PythonExamples.requireTools(List.of("confluent_kafka"), "python3-confluent-kafka");
        Path script = PythonExamples.script("afterglow_fleet.py");
        Path gen = Files.createDirectories(dir.resolve("gen"));
        PythonExamples.generate(gen);
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
                String sensorOut = PythonExamples.run(List.of(PythonExamples.PYTHON.toString(), script.toString(), "sensor", "--kafka", broker.bootstrap(),
                        "--sensor", "py-cam", "--seconds", "2"), gen, 60);
                Matcher sent = Pattern.compile("sensor py-cam: sent (\\d+) packets, (\\d+) events").matcher(sensorOut);
                assertTrue(sent.find(), sensorOut);
                long events = Long.parseLong(sent.group(2));
                FleetEndToEndTest.waitFor("every event applied", 30, () -> node.sensors().get("py-cam") != null
                        && node.sensors().get("py-cam").counters().get(NodeCounter.EVENTS_RECEIVED) == events);
                String framesOut = PythonExamples.run(List.of(PythonExamples.PYTHON.toString(), script.toString(), "frames", "--kafka", broker.bootstrap(),
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
}
