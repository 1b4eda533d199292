import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * Writes the Markdown report of bench/run-all.sh from what the run left in its folder: the JMH
 * results (jmh-filters.json, jmh-node.json), the load generator's sweep (surge/surge.csv,
 * surge/surge-latency.png, surge.txt) and machine.txt. Run as a single-file program with the
 * node jar on the class path (for Jackson):
 *
 *   java -cp node/target/afterglow.jar bench/BenchReport.java OUT_DIR
 */
public class BenchReport {
    /** Sweep columns shown in the Markdown table; surge.csv has them all. */
    private static final List<String> SWEEP = List.of("step", "rate_asked", "offered_ev_s", "applied_ev_s", "shed_pct",
            "e2e_p50_ms", "e2e_p99_ms", "e2e_p999_ms", "e2e_max_ms", "s2p_p50_ms", "s2p_p99_ms", "s2p_p999_ms",
            "s2p_max_ms", "a2p_p99_ms", "frames_s_per_sub", "missed", "node_skipped", "difference");

    public static void main(String[] args) throws IOException {
        Path dir = Path.of(args[0]);
        List<String> md = new ArrayList<>();
        md.add("# Afterglow benchmark report");
        md.add("");
        Path machine = dir.resolve("machine.txt");
        if (Files.exists(machine)) {
            md.add("## Machine and run");
            md.add("");
            for (String line : Files.readAllLines(machine, StandardCharsets.UTF_8)) {
                md.add("- " + line);
            }
            md.add("");
        }
        md.add("## JMH");
        md.add("");
        md.add("Throughput benchmarks count one operation per event (score: events/s); readout and frame");
        md.add("benchmarks report time per frame. `alloc` is JMH's gc.alloc.rate.norm (bytes per operation) when");
        md.add("the run used `-prof gc`.");
        md.add("");
        md.add("| module | benchmark | parameters | mode | score | error (99.9%) | unit | alloc B/op |");
        md.add("|---|---|---|---|---:|---:|---|---:|");
        int rows = 0;
        for (String module : List.of("filters", "node")) {
            Path json = dir.resolve("jmh-" + module + ".json");
            if (!Files.exists(json) || Files.size(json) == 0) {
                continue;
            }
            for (JsonNode b : new ObjectMapper().readTree(json.toFile())) {
                String name = b.path("benchmark").asText();
                name = name.substring(name.lastIndexOf('.', name.lastIndexOf('.') - 1) + 1);
                List<String> params = new ArrayList<>();
                for (Map.Entry<String, JsonNode> e : b.path("params").properties()) {
                    params.add(e.getKey() + "=" + e.getValue().asText());
                }
                JsonNode primary = b.path("primaryMetric");
                JsonNode alloc = b.path("secondaryMetrics").path("gc.alloc.rate.norm");
                if (alloc.isMissingNode()) { // older JMH versions prefix secondary metrics with a middle dot
                    alloc = b.path("secondaryMetrics").path("\u00b7gc.alloc.rate.norm");
                }
                md.add("| " + module + " | " + name + " | " + String.join(", ", params) + " | " + b.path("mode").asText()
                        + " | " + num(primary.path("score").asDouble()) + " | " + num(primary.path("scoreError").asDouble())
                        + " | " + primary.path("scoreUnit").asText() + " | "
                        + (alloc.isMissingNode() ? "" : num(alloc.path("score").asDouble())) + " |");
                rows++;
            }
        }
        if (rows == 0) {
            md.add("| (no JMH results in this run) | | | | | | | |");
        }
        md.add("");
        md.add("## Load generator sweep");
        md.add("");
        Path csv = dir.resolve("surge").resolve("surge.csv");
        Path text = dir.resolve("surge.txt");
        if (Files.exists(text)) {
            for (String line : Files.readAllLines(text, StandardCharsets.UTF_8)) {
                if (line.startsWith("surge: ") && !line.startsWith("surge: step") && !line.startsWith("surge: wrote")) {
                    md.add("- " + line.substring("surge: ".length()));
                }
            }
            md.add("");
        }
        if (Files.exists(csv)) {
            md.add("Rates in events/s (all sensors), latencies in ms: `e2e` on the generator's clock (frame received minus");
            md.add("the host time its sensor time was sent), `s2p` the frames' `sensor_to_publish_us`, `a2p` their");
            md.add("`arrival_to_publish_us`. Every column is in `surge/surge.csv`.");
            md.add("");
            List<String> lines = Files.readAllLines(csv, StandardCharsets.UTF_8);
            List<String> header = Arrays.asList(lines.get(0).split(",", -1));
            md.add("| " + String.join(" | ", SWEEP) + " |");
            md.add("|" + "---:|".repeat(SWEEP.size()));
            for (String line : lines.subList(1, lines.size())) {
                String[] f = line.split(",", -1);
                List<String> cells = new ArrayList<>();
                for (String col : SWEEP) {
                    int i = header.indexOf(col);
                    cells.add(i < 0 || f[i].isEmpty() ? "-" : f[i]);
                }
                md.add("| " + String.join(" | ", cells) + " |");
            }
            md.add("");
            if (Files.exists(text)) {
                md.add("Consistency (events sent against the node's counters):");
                md.add("");
                md.add("```");
                for (String line : Files.readAllLines(text, StandardCharsets.UTF_8)) {
                    if (line.startsWith("step ") && line.contains(" = applied ")) {
                        md.add(line);
                    }
                }
                md.add("```");
                md.add("");
            }
            md.add("![frame latency against offered rate](surge/surge-latency.png)");
        } else {
            md.add("(no sweep results: see surge.txt and node.log)");
        }
        md.add("");
        Files.write(dir.resolve("report.md"), md, StandardCharsets.UTF_8);
    }

    private static String num(double v) {
        if (Double.isNaN(v)) {
            return "";
        }
        double a = Math.abs(v);
        if (a >= 1e6) {
            return String.format(Locale.ROOT, "%.3e", v);
        }
        return String.format(Locale.ROOT, a >= 100 ? "%.1f" : "%.3f", v);
    }
}
