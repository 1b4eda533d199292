package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.demo.SyntheticFeed;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * The live view page in a real browser: Debian's Chromium, driven headless by npm
 * {@code playwright-core} through {@code src/test/js/live-view-check.mjs}, opens the page of a
 * node that a paced synthetic sensor feeds. The script checks that the frame canvas is not blank,
 * the activity canvas shows both polarities and the plots advance, and saves a screenshot to
 * {@code target/live-view/live-view.png}. In CI (CI=true) a missing chromium, node or
 * node_modules fails the test; elsewhere it is skipped.
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class LiveViewBrowserTest {
    private static final Path CHROMIUM = Path.of("/usr/bin/chromium");
    private static final Path SCRIPT_DIR = Path.of("src/test/js");
    private static final Path SCREENSHOT = Path.of("target/live-view/live-view.png");
    // Small enough that the synthetic sensor, the node and Chromium share two busy cores.
    private static final int W = 240;
    private static final int H = 180;

    @Test
    void pageShouldShowFramesActivityAndAdvancingPlotsInChromium() throws Exception {
        String node = findNode();
        List<String> missing = new ArrayList<>();
        if (!Files.isExecutable(CHROMIUM)) {
            missing.add(CHROMIUM + " (Debian package chromium)");
        }
        if (node == null) {
            missing.add("node (Node.js)");
        }
        if (!Files.isDirectory(SCRIPT_DIR.resolve("node_modules/playwright-core"))) {
            missing.add(SCRIPT_DIR.resolve("node_modules") + " (npm ci --prefix node/src/test/js)");
        }
        if (!missing.isEmpty()) {
            if ("true".equals(System.getenv("CI"))) {
                throw new AssertionError("CI must provide " + missing);
            }
            Assumptions.abort("missing " + missing);
        }
        Files.createDirectories(SCREENSHOT.getParent());
        Files.deleteIfExists(SCREENSHOT);
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: -1, http-port: 0}
                sensors:
                  - id: parcel-line
                    width: %d
                    height: %d
                    chain: "refractory(period=100us) | background-activity(window=5ms) | complementary(cutoff=3rad/s)"
                    frame-rate-hz: 50
                    latency-budget-ms: 2000
                """.formatted(W, H), "test");
        try (AfterglowNode afterglow = AfterglowNode.start(config)) {
            Thread sensor = new Thread(() -> {
                try (SensorClient c = SensorClient.connect("127.0.0.1", afterglow.ingestTcpPort(), "parcel-line", W, H, true)) {
                    new SyntheticFeed(SceneKind.PARCEL_LINE, W, H, 1.0, 7).run(SyntheticFeed.tcp(c), "parcel-line", 0, 1000, 1, true);
                } catch (IOException | InterruptedException e) {
                    // stopped at the end of the test
                }
            }, "test-sensor");
            sensor.setDaemon(true);
            sensor.start();
            try {
                String url = "http://127.0.0.1:" + afterglow.httpPort() + "/live?sensor=parcel-line&fps=10";
                Process p = new ProcessBuilder(node, "live-view-check.mjs", url, SCREENSHOT.toAbsolutePath().toString())
                        .directory(SCRIPT_DIR.toFile())
                        .redirectErrorStream(true)
                        .start();
                boolean done = p.waitFor(90, TimeUnit.SECONDS);
                if (!done) {
                    p.descendants().forEach(ProcessHandle::destroyForcibly);
                    p.destroyForcibly();
                }
                String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
                System.out.println("live-view-check.mjs: " + out.strip());
                assertTrue(done, "browser check did not finish in 90 s:\n" + out);
                assertEquals(0, p.exitValue(), out);
                assertTrue(Files.size(SCREENSHOT) > 10_000, "screenshot " + SCREENSHOT.toAbsolutePath());
            } finally {
                sensor.interrupt();
            }
        }
    }

    private static String findNode() {
        for (String dir : System.getenv().getOrDefault("PATH", "").split(java.io.File.pathSeparator)) {
            if (!dir.isEmpty() && Files.isExecutable(Path.of(dir, "node"))) {
                return Path.of(dir, "node").toString();
            }
        }
        return null;
    }
}
