package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.net.http.HttpClient;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The image's entry command outside Docker: the node and both sensors run in their own processes
 * with the arguments the compose services give the image's {@code java -jar} entry point (the
 * shaded jar's main class), only the config path and the node's address moved to this machine's
 * loopback; the image's health check command, run by bash as the container would, passes against
 * the node and fails where nothing listens.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class DockerEntryCommandTest {
    private static final Pattern LISTENING = Pattern.compile(
            "afterglow: listening on 127\\.0\\.0\\.1 +sensors tcp:(\\d+) udp:(\\d+) +subscribers tcp:(\\d+)");
    private static final Pattern HTTP = Pattern.compile("afterglow: http on 127\\.0\\.0\\.1:(\\d+) .*");

    @Test
    void composeCommandsShouldServeStreamAndPassTheHealthCheck(@TempDir Path dir) throws Exception {
        Path config = dir.resolve("node.yaml");
        Files.writeString(config, DockerFiles.loopbackConfigYaml());
        List<String> serve = new ArrayList<>(DockerFiles.command(DockerFiles.service("node")));
        serve.set(serve.indexOf("--config") + 1, config.toString());
        List<String> health = healthCheck();

        List<Process> started = new ArrayList<>();
        try {
            Path nodeLog = dir.resolve("node.log");
            Process node = start(serve, nodeLog);
            started.add(node);
            Matcher listening = awaitLine(nodeLog, LISTENING, node);
            int http = Integer.parseInt(awaitLine(nodeLog, HTTP, node).group(1));
            int tcp = Integer.parseInt(listening.group(1));
            int udp = Integer.parseInt(listening.group(2));

            assertEquals(0, bash(dir, health, http), "health check against the node");
            int closed;
            try (ServerSocket s = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
                closed = s.getLocalPort();
            }
            assertNotEquals(0, bash(dir, health, closed), "health check where nothing listens");

            List<String> sensor = DockerFiles.command(DockerFiles.service("sensor"));
            sensor.set(sensor.indexOf("--node") + 1, "127.0.0.1:" + tcp);
            List<String> sensorUdp = DockerFiles.command(DockerFiles.service("sensor-udp"));
            sensorUdp.set(sensorUdp.indexOf("--node") + 1, "127.0.0.1:" + udp);
            Process feedTcp = start(sensor, dir.resolve("sensor.log"));
            started.add(feedTcp);
            Process feedUdp = start(sensorUdp, dir.resolve("sensor-udp.log"));
            started.add(feedUdp);

            String tcpId = DockerFiles.option(sensor, "--scene");
            String udpId = DockerFiles.option(sensorUdp, "--scene");
            HttpClient client = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
            long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(40);
            String text = "";
            while (System.nanoTime() < deadline && !(receiving(text, tcpId) && receiving(text, udpId))) {
                Thread.sleep(250);
                text = HttpEndpointsTest.get(client, http, "/metrics").body();
            }
            String logs = "\nsensor: " + Files.readString(dir.resolve("sensor.log"))
                    + "\nsensor-udp: " + Files.readString(dir.resolve("sensor-udp.log"));
            assertTrue(receiving(text, tcpId), tcpId + " over TCP: no events" + logs);
            assertTrue(receiving(text, udpId), udpId + " over UDP: no events" + logs);
            // --seconds 0: both sensors still stream.
            assertTrue(feedTcp.isAlive() && feedUdp.isAlive(), "a sensor stopped early" + logs);
            assertEquals(200, HttpEndpointsTest.get(client, http, "/health").statusCode());
        } finally {
            for (int i = started.size() - 1; i >= 0; i--) {
                Process p = started.get(i);
                p.destroy(); // SIGTERM, as docker stop sends
                if (!p.waitFor(20, TimeUnit.SECONDS)) {
                    p.destroyForcibly().waitFor(5, TimeUnit.SECONDS);
                }
            }
        }
    }

    private static boolean receiving(String exposition, String sensor) {
        return HttpEndpointsTest.sample(exposition, "afterglow_ingest_events_total", "sensor=\"" + sensor + "\"") > 0;
    }

    /** The HEALTHCHECK's exec-form command from docker/Dockerfile (continuation lines joined). */
    private static List<String> healthCheck() throws IOException {
        String dockerfile = Files.readString(DockerFiles.docker().resolve("Dockerfile")).replace("\\\n", " ");
        Matcher m = Pattern.compile("(?m)^HEALTHCHECK .*? CMD (\\[.*])$").matcher(dockerfile);
        assertTrue(m.find(), "no exec-form HEALTHCHECK in docker/Dockerfile");
        List<String> cmd = new ArrayList<>();
        for (JsonNode a : DockerFiles.JSON.readTree(m.group(1))) {
            cmd.add(a.asText());
        }
        assertEquals("bash", cmd.get(0));
        return cmd;
    }

    /** Runs the health check with the node's HTTP port in place of the image's 7380. */
    private static int bash(Path dir, List<String> health, int port) throws Exception {
        String script = health.get(health.size() - 1);
        assertTrue(script.contains("/dev/tcp/127.0.0.1/7380 "), script);
        List<String> cmd = new ArrayList<>(health);
        cmd.set(cmd.size() - 1, script.replace("/dev/tcp/127.0.0.1/7380 ", "/dev/tcp/127.0.0.1/" + port + " "));
        return DockerFiles.run(dir.resolve("health-" + port + ".log"), cmd.toArray(String[]::new));
    }

    /** Starts {@code java -cp <test class path> dev.afterglow.node.AfterglowCli args...}: the jar's main class. */
    private static Process start(List<String> args, Path log) throws IOException {
        List<String> cmd = new ArrayList<>(List.of(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-cp", System.getProperty("java.class.path"), "dev.afterglow.node.AfterglowCli"));
        cmd.addAll(args);
        return new ProcessBuilder(cmd).redirectErrorStream(true).redirectOutput(log.toFile()).start();
    }

    private static Matcher awaitLine(Path log, Pattern line, Process p) throws Exception {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(30);
        while (System.nanoTime() < deadline) {
            for (String l : Files.readAllLines(log)) {
                Matcher m = line.matcher(l);
                if (m.matches()) {
                    return m;
                }
            }
            assertTrue(p.isAlive(), "exited: " + Files.readString(log));
            Thread.sleep(100);
        }
        throw new AssertionError("no line " + line + " in " + Files.readString(log));
    }
}
