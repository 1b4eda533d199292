package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.SensorConfig;
import java.net.URI;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The files under {@code docker/} without a Docker engine: the compose file mounts only files that
 * exist, its services point at each other with the ports the node configuration sets, the node
 * configuration validates, Prometheus's own {@code promtool} accepts the scrape configuration and
 * every dashboard query, and the image is pinned and runs as a non-root user.
 */
class DockerAssetsTest {

    @Test
    void composeShouldMountOnlyFilesThatExistInTheRepository() throws Exception {
        JsonNode services = DockerFiles.compose().path("services");
        int checked = 0;
        for (Map.Entry<String, JsonNode> s : services.properties()) {
            for (String[] m : DockerFiles.mounts(s.getValue())) {
                assertTrue(m[0].startsWith("./") || m[0].startsWith("../"), s.getKey() + ": bind mounts only, got " + m[0]);
                Path host = DockerFiles.docker().resolve(m[0]).normalize();
                assertTrue(Files.exists(host), s.getKey() + " mounts " + m[0] + ", missing at " + host);
                checked++;
            }
            JsonNode build = s.getValue().path("build");
            if (!build.isMissingNode()) {
                Path context = DockerFiles.docker().resolve(build.path("context").asText()).normalize();
                assertEquals(DockerFiles.root(), context, s.getKey() + " builds from the repository root");
                assertTrue(Files.isRegularFile(context.resolve(build.path("dockerfile").asText())), s.getKey() + " dockerfile");
            }
        }
        assertEquals(8, checked, "bind mounts: node config, edge config, member config (twice), prometheus.yml,"
                + " two Grafana provisioning folders, dashboards");
    }

    @Test
    void nodeServiceShouldReadAConfigThatValidatesAndListensForTheNetwork() throws Exception {
        JsonNode node = DockerFiles.service("node");
        List<String> args = DockerFiles.command(node);
        assertEquals("serve", args.get(0));
        NodeConfig c = NodeConfig.load(DockerFiles.nodeConfigFile()); // parses and validates, or throws
        // Other containers reach the node over the compose network, so it must not bind loopback only.
        assertEquals("0.0.0.0", c.listen.address);
        // Published on the host's loopback only, each to the port the node listens on.
        List<String> ports = new ArrayList<>();
        node.path("ports").forEach(p -> ports.add(p.asText()));
        assertEquals(List.of("127.0.0.1:" + c.listen.ingestTcpPort + ":" + c.listen.ingestTcpPort,
                "127.0.0.1:" + c.listen.ingestUdpPort + ":" + c.listen.ingestUdpPort + "/udp",
                "127.0.0.1:" + c.listen.subscriberPort + ":" + c.listen.subscriberPort,
                "127.0.0.1:" + c.listen.httpPort + ":" + c.listen.httpPort), ports);
        for (String service : List.of("prometheus", "grafana")) {
            DockerFiles.service(service).path("ports").forEach(p ->
                    assertTrue(p.asText().startsWith("127.0.0.1:"), service + " publishes " + p.asText()));
        }
        // The same file is the image's default configuration.
        String dockerfile = Files.readString(DockerFiles.docker().resolve("Dockerfile"));
        assertTrue(dockerfile.contains("COPY docker/node/afterglow.yaml " + DockerFiles.option(args, "--config")), dockerfile);
        assertTrue(dockerfile.contains("EXPOSE " + c.listen.ingestTcpPort + "/tcp " + c.listen.ingestUdpPort + "/udp "
                + c.listen.subscriberPort + "/tcp " + c.listen.httpPort + "/tcp"), dockerfile);
        assertTrue(dockerfile.contains("/dev/tcp/127.0.0.1/" + c.listen.httpPort), "health check port");
    }

    @Test
    void sensorsPrometheusAndGrafanaShouldPointAtTheServicesTheyNeed() throws Exception {
        NodeConfig c = NodeConfig.load(DockerFiles.nodeConfigFile());
        JsonNode services = DockerFiles.compose().path("services");

        List<String> tcp = DockerFiles.command(DockerFiles.service("sensor"));
        assertEquals("feed", tcp.get(0));
        assertEquals("node:" + c.listen.ingestTcpPort, DockerFiles.option(tcp, "--node"));
        assertEquals("0", DockerFiles.option(tcp, "--seconds"), "streams until stopped");
        List<String> udp = DockerFiles.command(DockerFiles.service("sensor-udp"));
        assertEquals("node:" + c.listen.ingestUdpPort, DockerFiles.option(udp, "--node"));
        assertEquals("udp", DockerFiles.option(udp, "--transport"));
        assertEquals("0", DockerFiles.option(udp, "--seconds"));
        // A datagram carries no geometry: the UDP sensor (id = scene name) must be listed with its size.
        SensorConfig listed = c.sensor(DockerFiles.option(udp, "--scene"));
        assertTrue(listed != null, "UDP sensor not listed in the node config");
        assertEquals(listed.width, Integer.parseInt(DockerFiles.option(udp, "--width")));
        assertEquals(listed.height, Integer.parseInt(DockerFiles.option(udp, "--height")));
        for (String sensor : List.of("sensor", "sensor-udp")) {
            JsonNode s = DockerFiles.service(sensor);
            assertEquals("service_healthy", s.path("depends_on").path("node").path("condition").asText(), sensor);
            assertEquals("on-failure", s.path("restart").asText(), sensor);
            assertEquals(DockerFiles.service("node").path("image").asText(), s.path("image").asText(), sensor);
        }

        JsonNode prometheus = DockerFiles.YAML.readTree(DockerFiles.docker().resolve("prometheus/prometheus.yml").toFile());
        JsonNode job = prometheus.path("scrape_configs").path(0);
        assertEquals("node:" + c.listen.httpPort, job.path("static_configs").path(0).path("targets").path(0).asText());
        // The fleet's nodes, each at the HTTP port its configuration sets.
        List<String> fleetTargets = new ArrayList<>();
        prometheus.path("scrape_configs").path(1).path("static_configs").path(0).path("targets")
                .forEach(t -> fleetTargets.add(t.asText()));
        List<String> expected = new ArrayList<>();
        for (String service : List.of("edge", "member-a", "member-b")) {
            JsonNode svc = DockerFiles.service(service);
            List<String> args = DockerFiles.command(svc);
            NodeConfig fc = NodeConfig.load(DockerFiles.mountedFile(svc, DockerFiles.option(args, "--config")));
            assertEquals("kafka:9092", fc.kafka.bootstrapServers, service);
            expected.add(service + ":" + fc.listen.httpPort);
        }
        assertEquals(expected, fleetTargets);
        List<String> fleetSensor = DockerFiles.command(DockerFiles.service("sensor-fleet"));
        NodeConfig edge = NodeConfig.load(DockerFiles.mountedFile(DockerFiles.service("edge"), "/etc/afterglow/edge.yaml"));
        assertEquals("edge:" + edge.listen.ingestTcpPort, DockerFiles.option(fleetSensor, "--node"));
        assertTrue(edge.kafka.forward && !edge.kafka.processForwarded, "the edge forwards and does not process");
        assertEquals("1s", prometheus.path("global").path("scrape_interval").asText());
        assertTrue(DockerFiles.command(DockerFiles.service("prometheus")).contains("--config.file=/etc/prometheus/prometheus.yml"));
        assertTrue(DockerFiles.mountedFile(DockerFiles.service("prometheus"), "/etc/prometheus/prometheus.yml")
                .endsWith("prometheus/prometheus.yml"));

        JsonNode grafana = DockerFiles.service("grafana");
        JsonNode ds = DockerFiles.YAML.readTree(DockerFiles.mountedFile(grafana, "/etc/grafana/provisioning/datasources")
                .resolve("prometheus.yaml").toFile()).path("datasources").path(0);
        URI url = URI.create(ds.path("url").asText());
        assertTrue(services.has(url.getHost()), "data source host " + url.getHost() + " is a compose service");
        assertEquals(9090, url.getPort());
        JsonNode provider = DockerFiles.YAML.readTree(DockerFiles.mountedFile(grafana, "/etc/grafana/provisioning/dashboards")
                .resolve("afterglow.yaml").toFile()).path("providers").path(0);
        Path dashboards = DockerFiles.mountedFile(grafana, provider.path("options").path("path").asText());
        assertTrue(Files.isRegularFile(dashboards.resolve("afterglow.json")));
        String home = grafana.path("environment").path("GF_DASHBOARDS_DEFAULT_HOME_DASHBOARD_PATH").asText();
        assertEquals(provider.path("options").path("path").asText() + "/afterglow.json", home);
        assertEquals("true", grafana.path("environment").path("GF_AUTH_ANONYMOUS_ENABLED").asText());
        assertEquals("Viewer", grafana.path("environment").path("GF_AUTH_ANONYMOUS_ORG_ROLE").asText());

        // Every panel, query and the variable use the provisioned data source.
        String uid = ds.path("uid").asText();
        JsonNode dashboard = DockerFiles.dashboard();
        int refs = 0;
        for (JsonNode p : dashboard.path("panels")) {
            if (p.path("type").asText().equals("row")) {
                continue;
            }
            assertEquals(uid, p.path("datasource").path("uid").asText(), p.path("title").asText());
            for (JsonNode t : p.path("targets")) {
                assertEquals(uid, t.path("datasource").path("uid").asText(), p.path("title").asText());
                refs++;
            }
        }
        assertEquals(uid, dashboard.path("templating").path("list").path(0).path("datasource").path("uid").asText());
        assertTrue(refs >= 10, refs + " targets");
    }

    @Test
    void imagesShouldBePinnedAndTheNodeShouldRunAsNonRoot() throws Exception {
        List<String> lines = Files.readAllLines(DockerFiles.docker().resolve("Dockerfile"));
        List<String> images = new ArrayList<>();
        for (String l : lines) {
            if (l.startsWith("FROM ")) {
                images.add(l.split("\\s+")[1]);
            }
        }
        DockerFiles.compose().path("services").forEach(s -> {
            if (s.path("build").isMissingNode()) {
                images.add(s.path("image").asText());
            }
        });
        assertEquals(6, images.size(), images.toString()); // build, runtime, kafka, kafka-topics, prometheus, grafana
        Pattern pinned = Pattern.compile("[^:]+:v?\\d+\\.\\d+\\.\\d+[-_a-z0-9.]*");
        for (String image : images) {
            assertTrue(pinned.matcher(image).matches(), image + " is not pinned to a release");
        }
        String user = lines.stream().filter(l -> l.startsWith("USER ")).findFirst().orElse("USER 0");
        Matcher uid = Pattern.compile("USER (\\d+)(:\\d+)?").matcher(user);
        assertTrue(uid.matches(), "numeric user expected: " + user);
        assertNotEquals("0", uid.group(1));
        assertTrue(lines.contains("COPY --from=build /src/node/target/afterglow.jar /app/afterglow.jar"));
        assertTrue(lines.contains("ENTRYPOINT [\"java\", \"-jar\", \"/app/afterglow.jar\"]"));
        // The jar the image copies is the one the node module's shade plugin writes.
        String pom = Files.readString(DockerFiles.root().resolve("node/pom.xml"));
        assertTrue(pom.contains("<finalName>afterglow</finalName>")
                && pom.contains("<mainClass>dev.afterglow.node.AfterglowCli</mainClass>"), "shade configuration");
        // Every module the parent pom lists is copied into the build stage, pom first.
        String parent = Files.readString(DockerFiles.root().resolve("pom.xml"));
        Matcher modules = Pattern.compile("<module>([^<]+)</module>").matcher(parent);
        int count = 0;
        while (modules.find()) {
            String m = modules.group(1);
            assertTrue(lines.indexOf("COPY " + m + "/pom.xml " + m + "/") >= 0, m + " pom");
            assertTrue(lines.indexOf("COPY " + m + "/src " + m + "/src") > lines.indexOf("COPY " + m + "/pom.xml " + m + "/"), m + " sources");
            count++;
        }
        assertEquals(4, count);
    }

    @Test
    void promtoolShouldAcceptTheScrapeConfig(@TempDir Path dir) throws Exception {
        Path promtool = DockerFiles.promtool();
        Assumptions.assumeTrue(promtool != null, "/usr/bin/promtool not found (Debian package prometheus)");
        Path log = dir.resolve("promtool.log");
        int code = DockerFiles.run(log, promtool.toString(), "check", "config",
                DockerFiles.docker().resolve("prometheus/prometheus.yml").toString());
        assertEquals(0, code, Files.readString(log));
    }

    @Test
    void promtoolShouldParseEveryDashboardQuery(@TempDir Path dir) throws Exception {
        Path promtool = DockerFiles.promtool();
        Assumptions.assumeTrue(promtool != null, "/usr/bin/promtool not found (Debian package prometheus)");
        List<DockerFiles.Target> targets = DockerFiles.targets(DockerFiles.dashboard());
        List<String> exprs = new ArrayList<>();
        for (DockerFiles.Target t : targets) {
            exprs.add(t.expr());
        }
        assertEquals(0, checkRules(promtool, dir.resolve("dashboard"), exprs), Files.readString(dir.resolve("dashboard.log")));
        // The same check refuses a query with a missing parenthesis, so it does parse them.
        assertNotEquals(0, checkRules(promtool, dir.resolve("broken"),
                List.of("sum by (sensor) (rate(afterglow_ingest_events_total[$__rate_interval])")));
    }

    /** Writes the queries as recording rules, with Grafana's variables replaced as Grafana would, and runs promtool check rules. */
    private static int checkRules(Path promtool, Path base, List<String> exprs) throws Exception {
        ObjectNode root = DockerFiles.YAML.createObjectNode();
        ObjectNode group = root.putArray("groups").addObject();
        group.put("name", "dashboard");
        ArrayNode rules = group.putArray("rules");
        for (int i = 0; i < exprs.size(); i++) {
            String e = exprs.get(i).replace("$__rate_interval", "1m").replace("$sensor", ".*");
            assertFalse(e.contains("$"), "unknown Grafana variable in " + exprs.get(i));
            rules.addObject().put("record", "dashboard_query_" + i).put("expr", e);
        }
        Path file = Path.of(base + ".rules.yml");
        DockerFiles.YAML.writeValue(file.toFile(), root);
        return DockerFiles.run(Path.of(base + ".log"), promtool.toString(), "check", "rules", file.toString());
    }

    @Test
    void metricNameExtractionShouldSkipFunctionsKeywordsLabelsAndDurations() {
        assertEquals(Set.of("a_total", "b_seconds", "c"), DockerFiles.metricNames(
                "sum by (sensor, stage) (rate(a_total{x=~\"}$sensor\", quantile=\"0.5\"}[$__rate_interval]))"
                        + " - on (sensor) group_left b_seconds offset 5m > bool 2 or max_over_time(c[1m:10s])"));
        assertEquals(Set.of("afterglow_subscribers_connected"), DockerFiles.metricNames("afterglow_subscribers_connected"));
    }
}
