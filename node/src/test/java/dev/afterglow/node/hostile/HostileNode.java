package dev.afterglow.node.hostile;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The real node ({@code serve}) in its own JVM, from the test classpath, on loopback ports chosen
 * by the kernel (port 0; the node prints them). Small heap and direct-memory limits make any
 * exhaustion show within seconds. Its output is drained continuously (a full pipe would stall the
 * node) and kept for the tests. {@link #close()} sends SIGTERM, then kills it if it has not gone.
 */
final class HostileNode implements AutoCloseable {
    private static final Pattern LISTENING = Pattern.compile(
            "afterglow: listening on 127\\.0\\.0\\.1 +sensors tcp:(\\d+) udp:(-?\\d+) +subscribers tcp:(\\d+)");
    private static final Pattern HTTP = Pattern.compile("afterglow: http on 127\\.0\\.0\\.1:(\\d+) .*");
    private static final int MAX_LINES = 20_000;

    final String yaml;
    final Process process;
    final int ingestTcpPort;
    final int ingestUdpPort;
    final int subscriberPort;
    final int httpPort;
    private final Path dir;
    private final List<String> lines = new ArrayList<>();
    private long linesDropped;

    private HostileNode(String yaml, Path dir, Process process, int[] ports) {
        this.yaml = yaml;
        this.dir = dir;
        this.process = process;
        this.ingestTcpPort = ports[0];
        this.ingestUdpPort = ports[1];
        this.subscriberPort = ports[2];
        this.httpPort = ports[3];
    }

    /** Starts {@code serve} with this configuration and JVM memory limits; returns once every port is known. */
    static HostileNode start(String yaml, int heapMb, int directMb) throws IOException, InterruptedException {
        Path dir = Files.createTempDirectory("hostile-node");
        Path config = dir.resolve("node.yaml");
        Files.writeString(config, yaml);
        Process p = new ProcessBuilder(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-Xmx" + heapMb + "m", "-XX:MaxDirectMemorySize=" + directMb + "m",
                "-cp", System.getProperty("java.class.path"),
                "dev.afterglow.node.AfterglowCli", "serve", "--config", config.toString())
                .redirectErrorStream(true).start();
        List<String> early = new ArrayList<>();
        int[] ports = {-1, -1, -1, -1};
        BufferedReader out = new BufferedReader(new InputStreamReader(p.getInputStream(), StandardCharsets.UTF_8));
        Thread reading = new Thread(() -> {
            try {
                for (String line; (line = out.readLine()) != null; ) {
                    synchronized (early) {
                        early.add(line);
                        Matcher m = LISTENING.matcher(line);
                        if (m.matches()) {
                            ports[0] = Integer.parseInt(m.group(1));
                            ports[1] = Integer.parseInt(m.group(2));
                            ports[2] = Integer.parseInt(m.group(3));
                        }
                        Matcher h = HTTP.matcher(line);
                        if (h.matches()) {
                            ports[3] = Integer.parseInt(h.group(1));
                            early.notifyAll();
                            return;
                        }
                    }
                }
            } catch (IOException e) {
                // process gone; reported below
            }
            synchronized (early) {
                early.notifyAll();
            }
        }, "hostile-node-start");
        reading.setDaemon(true);
        reading.start();
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(30);
        synchronized (early) {
            while (ports[3] < 0 && reading.isAlive() && System.nanoTime() < deadline) {
                early.wait(200);
            }
        }
        if (ports[3] < 0 || ports[0] < 0) {
            p.destroyForcibly().waitFor(5, TimeUnit.SECONDS);
            String printed;
            synchronized (early) {
                printed = String.join("\n", early);
            }
            throw new IllegalStateException("the node did not start with this configuration:\n" + yaml
                    + "\n--- its output:\n" + printed);
        }
        reading.join(5_000);
        HostileNode node = new HostileNode(yaml, dir, p, ports);
        synchronized (early) {
            node.lines.addAll(early);
        }
        Thread drain = new Thread(() -> node.drain(out), "hostile-node-output");
        drain.setDaemon(true);
        drain.start();
        return node;
    }

    private void drain(BufferedReader out) {
        try {
            for (String line; (line = out.readLine()) != null; ) {
                synchronized (lines) {
                    if (lines.size() < MAX_LINES) {
                        lines.add(line);
                    } else {
                        linesDropped++;
                    }
                }
            }
        } catch (IOException e) {
            // process gone
        }
    }

    /** Everything the node printed so far (stdout and stderr). */
    String output() {
        synchronized (lines) {
            return String.join("\n", lines) + (linesDropped > 0 ? "\n... " + linesDropped + " more lines" : "");
        }
    }

    /** The last {@code n} lines the node printed. */
    String outputTail(int n) {
        synchronized (lines) {
            return String.join("\n", lines.subList(Math.max(0, lines.size() - n), lines.size()));
        }
    }

    boolean alive() {
        return process.isAlive();
    }

    /** Resident set size of the node's process in MiB ({@code VmRSS} in /proc/PID/status, proc(5)); -1 if gone. */
    long rssMb() {
        try {
            for (String line : Files.readAllLines(Path.of("/proc", String.valueOf(process.pid()), "status"))) {
                if (line.startsWith("VmRSS:")) {
                    return Long.parseLong(line.replaceAll("[^0-9]", "")) / 1024;
                }
            }
        } catch (IOException | RuntimeException e) {
            return -1;
        }
        return -1;
    }

    /** {@code GET /metrics}, parsed; fails unless it answers 200 within {@code timeoutMillis}. */
    Scrape metrics(int timeoutMillis) throws IOException {
        RawHttp.Response r = RawHttp.get(httpPort, "/metrics", timeoutMillis);
        if (r.status() != 200) {
            throw new IOException("/metrics answered " + r.status() + ": " + r.body());
        }
        return Scrape.parse(r.body());
    }

    /** {@code GET /metrics} with a 2 s deadline. */
    Scrape metrics() throws IOException {
        return metrics(2_000);
    }

    @Override
    public void close() {
        process.destroy();
        try {
            if (!process.waitFor(5, TimeUnit.SECONDS)) { // a wedged node may never finish draining
                process.destroyForcibly().waitFor(5, TimeUnit.SECONDS);
            }
        } catch (InterruptedException e) {
            process.destroyForcibly();
            Thread.currentThread().interrupt();
        } finally {
            try {
                Files.deleteIfExists(dir.resolve("node.yaml"));
                Files.deleteIfExists(dir);
            } catch (IOException ignored) {
                // a temp directory left behind is harmless
            }
        }
    }
}
