package dev.afterglow.node.surge;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowCli;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import java.awt.image.BufferedImage;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import javax.imageio.ImageIO;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;
import picocli.CommandLine;

/**
 * The {@code surge} command: option checks with their exact messages, and a short low-rate sweep
 * against a real node on loopback whose report must be complete and add up.
 */
class SurgeCommandTest {

    private static int run(StringWriter err, String... args) {
        CommandLine cl = AfterglowCli.commandLine();
        cl.setErr(new PrintWriter(err, true));
        return cl.execute(args);
    }

    private static void assertRefused(String message, String... args) {
        StringWriter err = new StringWriter();
        String[] full = new String[args.length + 1];
        full[0] = "surge";
        System.arraycopy(args, 0, full, 1, args.length);
        assertEquals(2, run(err, full), err.toString());
        assertEquals("afterglow: " + message, err.toString().trim());
    }

    @Test
    void shouldRefuseBadRateListsWithOneLineNamingTheEntry() {
        assertRefused("--rates=1M,,2M: empty entry", "--rates", "1M,,2M");
        assertRefused("--rates=1M,fast: 'fast' is not a rate (e.g. 250k, 1.5M, 2000000 or max)", "--rates", "1M,fast");
        assertRefused("--rates=2M,500M: 500M outside [1k, 100M] events/s per sensor", "--rates", "2M,500M");
        assertRefused("--rates=0.5k: 0.5k outside [1k, 100M] events/s per sensor", "--rates", "0.5k");
    }

    @Test
    void shouldRefuseOutOfRangeCountsAndBadChoices() {
        assertRefused("--sensors=17.0 outside [1, 16]", "--sensors", "17");
        assertRefused("--sensors=0.0 outside [1, 16]", "--sensors", "0");
        assertRefused("--subscribers=65.0 outside [0, 64]", "--subscribers", "65");
        assertRefused("--step-seconds=0.1 outside [0.5, 3600]", "--step-seconds", "0.1");
        assertRefused("--packet-us=50.0 outside [100, 100000]", "--packet-us", "50");
        assertRefused("--transport=sctp: expected tcp, udp or kafka", "--transport", "sctp");
        assertRefused("--http=localhost: expected HOST:PORT", "--http", "localhost");
        assertRefused("--scene=meadow: expected one of parcel-line, dock-door, orchard-pan, floodlit-hoist, stockroom-pan, "
                + "rink-shot, parcel-line_dark, dock-door_dark, orchard-pan_dark, floodlit-hoist_dark, stockroom-pan_dark, "
                + "rink-shot_dark", "--scene", "meadow");
    }

    /** Column names the issue asks for, each must be in the CSV header. */
    private static final List<String> REQUIRED = List.of("rate_asked", "offered_ev_s", "applied_ev_s", "shed_pct",
            "e2e_p50_ms", "e2e_p99_ms", "e2e_p999_ms", "e2e_max_ms", "s2p_p50_ms", "s2p_p99_ms", "s2p_p999_ms",
            "s2p_max_ms", "a2p_p50_ms", "a2p_p99_ms", "a2p_p999_ms", "a2p_max_ms", "frames_s_per_sub",
            "frames_min_sub", "missed", "sent", "received", "applied", "dropped", "dropped_outside", "dropped_late",
            "shed_latency", "shed_queue", "rejected", "malformed_packets", "difference");

    @Test
    @Timeout(value = 60, unit = TimeUnit.SECONDS)
    void shouldReportACompleteConsistentSweepAgainstALiveNode(@TempDir Path dir) throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                sensor-defaults: {frame-rate-hz: 100, latency-budget-ms: 200}
                """, "test");
        Path out = dir.resolve("report");
        String stdout;
        int code;
        long[] nodeTotals = new long[2];
        try (AfterglowNode node = AfterglowNode.start(config)) {
            PrintStream saved = System.out;
            ByteArrayOutputStream captured = new ByteArrayOutputStream();
            StringWriter err = new StringWriter();
            try {
                System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
                code = run(err, "surge", "--node", "127.0.0.1:" + node.ingestTcpPort(),
                        "--subscribe", "127.0.0.1:" + node.subscriberPort(), "--http", "127.0.0.1:" + node.httpPort(),
                        "--sensors", "2", "--subscribers", "2", "--width", "160", "--height", "120",
                        "--rates", "100k,200k", "--step-seconds", "2", "--warmup-seconds", "0", "--out", out.toString());
            } finally {
                System.setOut(saved);
            }
            stdout = captured.toString(StandardCharsets.UTF_8);
            assertEquals(0, code, stdout + err);
            for (String id : List.of("surge-0", "surge-1")) {
                Counters c = node.sensors().get(id).counters();
                nodeTotals[0] += c.get(NodeCounter.EVENTS_RECEIVED) + c.get(NodeCounter.EVENTS_SHED_LATENCY)
                        + c.get(NodeCounter.EVENTS_SHED_QUEUE);
                nodeTotals[1] += c.get(NodeCounter.PACKETS_MALFORMED);
            }
        }

        // The CSV (RFC 4180 without quoting: no field holds a comma): a header, then one row per step.
        List<String> lines = Files.readAllLines(out.resolve(Surge.CSV), StandardCharsets.UTF_8);
        assertEquals(3, lines.size(), String.join("\n", lines));
        List<String> header = Arrays.asList(lines.get(0).split(",", -1));
        for (String name : REQUIRED) {
            assertTrue(header.contains(name), name + " missing from " + header);
        }
        List<Map<String, String>> rows = new ArrayList<>();
        for (String line : lines.subList(1, lines.size())) {
            String[] fields = line.split(",", -1);
            assertEquals(header.size(), fields.length, line);
            Map<String, String> row = new HashMap<>();
            for (int i = 0; i < fields.length; i++) {
                assertFalse(fields[i].isEmpty(), header.get(i) + " empty in " + line);
                row.put(header.get(i), fields[i]);
            }
            rows.add(row);
        }
        long sentTotal = 0;
        for (int k = 0; k < rows.size(); k++) {
            Map<String, String> r = rows.get(k);
            assertEquals(Integer.toString(k + 1), r.get("step"));
            assertEquals(k == 0 ? "100k" : "200k", r.get("rate_asked"));
            long sent = Long.parseLong(r.get("sent"));
            assertTrue(sent > 0, r.toString());
            sentTotal += sent;
            // Counts add up: every event sent is one the node received (its per-transport counter),
            // and received = applied + dropped + shed + rejected, from independent node counters.
            assertEquals(sent, Long.parseLong(r.get("received")), r.toString());
            assertEquals(Long.parseLong(r.get("received")), Long.parseLong(r.get("applied")) + Long.parseLong(r.get("dropped"))
                    + Long.parseLong(r.get("shed_latency")) + Long.parseLong(r.get("shed_queue"))
                    + Long.parseLong(r.get("rejected")), r.toString());
            assertEquals("0", r.get("rejected"));
            assertEquals(Long.parseLong(r.get("dropped")), Long.parseLong(r.get("dropped_outside")) + Long.parseLong(r.get("dropped_late")));
            assertEquals("0", r.get("malformed_packets"));
            assertEquals("0", r.get("difference"));
            assertTrue(Long.parseLong(r.get("frames_min_sub")) > 0, r.toString());
            // Percentiles of one distribution never decrease with the rank (definition of a
            // percentile; HdrHistogram reports them so).
            for (String kind : List.of("e2e", "s2p", "a2p")) {
                double p50 = Double.parseDouble(r.get(kind + "_p50_ms"));
                double p99 = Double.parseDouble(r.get(kind + "_p99_ms"));
                double p999 = Double.parseDouble(r.get(kind + "_p999_ms"));
                double max = Double.parseDouble(r.get(kind + "_max_ms"));
                assertTrue(0 <= p50 && p50 <= p99 && p99 <= p999 && p999 <= max, kind + " " + r);
            }
        }
        // Without warm-up every event the node took in was sent in a measured step: the sum over the
        // steps equals the node's own counters read in-process (not through HTTP).
        assertEquals(nodeTotals[0], sentTotal);
        assertEquals(0, nodeTotals[1]);

        // The table on stdout has the CSV's columns and values, then one consistency line per step.
        List<String> names = StepResult.COLUMNS.stream().map(StepResult.Column::name).toList();
        assertEquals(header, names);
        List<String> table = stdout.lines().dropWhile(l -> !Arrays.asList(l.trim().split(" +")).equals(names)).toList();
        assertFalse(table.isEmpty(), "no table header in\n" + stdout);
        for (int k = 1; k <= 2; k++) {
            String[] cells = table.get(k).trim().split(" +");
            assertEquals(names.size(), cells.length, table.get(k));
            assertEquals(Integer.toString(k), cells[0]);
            assertEquals(rows.get(k - 1).get("sent"), cells[names.indexOf("sent")]);
        }
        assertEquals(2, stdout.lines().filter(l -> l.startsWith("step ") && l.endsWith("difference 0")).count(), stdout);

        // The plot decodes as a PNG (ImageIO, the JDK's reader) of the declared size.
        BufferedImage png = ImageIO.read(out.resolve(Surge.PNG).toFile());
        assertNotNull(png);
        assertEquals(LatencyPlot.WIDTH, png.getWidth());
        assertEquals(LatencyPlot.HEIGHT, png.getHeight());
    }
}
