package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import dev.afterglow.node.config.NodeConfig;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * Reads the files under {@code docker/} for the Docker tests: the compose file, the node
 * configuration it mounts, the Grafana dashboard and its PromQL expressions. No Docker engine is
 * involved; everything is read from the repository.
 */
final class DockerFiles {
    static final ObjectMapper YAML = new ObjectMapper(new YAMLFactory());
    static final ObjectMapper JSON = new ObjectMapper();

    private DockerFiles() {
    }

    /** The repository root (Surefire runs in {@code node/}). */
    static Path root() {
        Path root = Path.of("..").toAbsolutePath().normalize();
        assertTrue(Files.isRegularFile(root.resolve("docker/compose.yaml")), "no docker/compose.yaml under " + root);
        return root;
    }

    static Path docker() {
        return root().resolve("docker");
    }

    static JsonNode compose() throws IOException {
        return YAML.readTree(docker().resolve("compose.yaml").toFile());
    }

    static JsonNode service(String name) throws IOException {
        JsonNode s = compose().path("services").path(name);
        assertTrue(s.isObject(), "compose service " + name + " missing");
        return s;
    }

    /** A service's command as a list of arguments (the exec form the compose file uses). */
    static List<String> command(JsonNode service) {
        List<String> args = new ArrayList<>();
        assertTrue(service.path("command").isArray(), "command must be a list: " + service.path("command"));
        service.path("command").forEach(a -> args.add(a.asText()));
        return args;
    }

    /** The value following {@code option} in {@code args}. */
    static String option(List<String> args, String option) {
        int i = args.indexOf(option);
        assertTrue(i >= 0 && i + 1 < args.size(), option + " missing in " + args);
        return args.get(i + 1);
    }

    /** Short-syntax bind mounts of a service: [host path relative to docker/, container path]. */
    static List<String[]> mounts(JsonNode service) {
        List<String[]> out = new ArrayList<>();
        for (JsonNode v : service.path("volumes")) {
            String[] parts = v.asText().split(":");
            assertTrue(parts.length >= 2, "volume " + v.asText());
            out.add(new String[] {parts[0], parts[1]});
        }
        return out;
    }

    /** The host file mounted at {@code containerPath} in {@code service}. */
    static Path mountedFile(JsonNode service, String containerPath) {
        for (String[] m : mounts(service)) {
            if (m[1].equals(containerPath)) {
                return docker().resolve(m[0]).normalize();
            }
        }
        throw new AssertionError(containerPath + " is not mounted: " + service.path("volumes"));
    }

    /** The node configuration file the compose {@code node} service reads, on the host. */
    static Path nodeConfigFile() throws IOException {
        JsonNode node = service("node");
        return mountedFile(node, option(command(node), "--config"));
    }

    /**
     * The compose node configuration with only the listen address and ports changed: loopback and
     * any free port (0) for every listener that is on.
     */
    static String loopbackConfigYaml() throws IOException {
        ObjectNode tree = (ObjectNode) YAML.readTree(nodeConfigFile().toFile());
        ObjectNode listen = (ObjectNode) tree.path("listen");
        listen.put("address", "127.0.0.1");
        for (String port : List.of("ingest-tcp-port", "ingest-udp-port", "subscriber-port", "http-port")) {
            assertTrue(listen.path(port).asInt() > 0, "the compose setup turns " + port + " on");
            listen.put(port, 0);
        }
        return YAML.writeValueAsString(tree);
    }

    /**
     * A fleet service's node configuration (edge, member-a, member-b) with the listen address on
     * loopback, every listener that is on at a free port, and the given Kafka bootstrap server.
     */
    static NodeConfig fleetLoopbackConfig(String service, String bootstrap) throws IOException {
        JsonNode svc = service(service);
        ObjectNode tree = (ObjectNode) YAML.readTree(mountedFile(svc, option(command(svc), "--config")).toFile());
        ObjectNode listen = (ObjectNode) tree.path("listen");
        listen.put("address", "127.0.0.1");
        for (String port : List.of("ingest-tcp-port", "ingest-udp-port", "subscriber-port", "http-port")) {
            if (listen.path(port).asInt() > 0) {
                listen.put(port, 0);
            }
        }
        ((ObjectNode) tree.path("kafka")).put("bootstrap-servers", bootstrap);
        tree.put("warm-up", false);
        return NodeConfig.parse(YAML.writeValueAsString(tree), "docker " + service + " (loopback)");
    }

    static NodeConfig loopbackConfig() throws IOException {
        return NodeConfig.parse(loopbackConfigYaml(), "docker/node (loopback)");
    }

    static JsonNode dashboard() throws IOException {
        return JSON.readTree(docker().resolve("grafana/dashboards/afterglow.json").toFile());
    }

    /** One query of a dashboard panel. */
    record Target(String panel, String expr) {
    }

    /** Every target of every panel, rows' nested panels included. */
    static List<Target> targets(JsonNode dashboard) {
        List<Target> out = new ArrayList<>();
        collect(dashboard.path("panels"), out);
        return out;
    }

    private static void collect(JsonNode panels, List<Target> out) {
        for (JsonNode p : panels) {
            for (JsonNode t : p.path("targets")) {
                out.add(new Target(p.path("title").asText(), t.path("expr").asText()));
            }
            collect(p.path("panels"), out);
        }
    }

    private static final Pattern STRING = Pattern.compile("\"(?:[^\"\\\\]|\\\\.)*\"|'(?:[^'\\\\]|\\\\.)*'");
    private static final Pattern MATCHERS = Pattern.compile("\\{[^}]*}");
    private static final Pattern RANGES = Pattern.compile("\\[[^\\]]*]");
    private static final Pattern GROUPING = Pattern.compile("\\b(by|without|on|ignoring|group_left|group_right)\\s*\\([^)]*\\)");
    private static final Pattern IDENTIFIER = Pattern.compile("[a-zA-Z_:][a-zA-Z0-9_:]*");
    /** PromQL keywords and literals (Prometheus documentation, "Querying basics" and "Operators"). */
    private static final Set<String> KEYWORDS = Set.of("by", "without", "on", "ignoring", "group_left", "group_right",
            "and", "or", "unless", "bool", "offset", "atan2", "inf", "nan", "start", "end");

    /**
     * The metric names a PromQL expression selects: identifiers left once string literals, label
     * matchers, range brackets and grouping clauses are removed, minus functions and aggregations
     * (an identifier followed by "("), keywords and duration suffixes.
     */
    static Set<String> metricNames(String expr) {
        String s = STRING.matcher(expr).replaceAll("\"\"");
        s = MATCHERS.matcher(s).replaceAll(" ");
        s = RANGES.matcher(s).replaceAll(" ");
        s = GROUPING.matcher(s).replaceAll(" ");
        Set<String> names = new TreeSet<>();
        Matcher m = IDENTIFIER.matcher(s);
        while (m.find()) {
            String id = m.group();
            char before = m.start() > 0 ? s.charAt(m.start() - 1) : ' ';
            if (Character.isDigit(before) || before == '.' || KEYWORDS.contains(id.toLowerCase())) {
                continue; // 5m in "offset 5m", 1e3
            }
            int next = m.end();
            while (next < s.length() && Character.isWhitespace(s.charAt(next))) {
                next++;
            }
            if (next < s.length() && s.charAt(next) == '(') {
                continue; // function or aggregation
            }
            names.add(id);
        }
        return names;
    }

    /** Names of the samples in a Prometheus text exposition (comment lines skipped). */
    static Set<String> sampleNames(String exposition) {
        Set<String> names = new TreeSet<>();
        for (String line : exposition.lines().toList()) {
            if (line.isBlank() || line.startsWith("#")) {
                continue;
            }
            int end = 0;
            while (end < line.length() && line.charAt(end) != '{' && line.charAt(end) != ' ') {
                end++;
            }
            names.add(line.substring(0, end));
        }
        return names;
    }

    /** Promtool, or null outside CI when it is missing (the test is then skipped by the caller). */
    static Path promtool() {
        Path p = Path.of("/usr/bin/promtool");
        if (!Files.isExecutable(p) && "true".equals(System.getenv("CI"))) {
            throw new AssertionError("CI must provide " + p + " (Debian package prometheus)");
        }
        return Files.isExecutable(p) ? p : null;
    }

    /** Runs a command, returns its exit code; output goes to {@code log}. */
    static int run(Path log, String... command) throws IOException, InterruptedException {
        Process p = new ProcessBuilder(command).redirectErrorStream(true).redirectOutput(log.toFile()).start();
        if (!p.waitFor(30, java.util.concurrent.TimeUnit.SECONDS)) {
            p.destroyForcibly();
            throw new AssertionError(String.join(" ", command) + " did not finish in 30 s");
        }
        return p.exitValue();
    }
}
