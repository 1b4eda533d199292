package dev.afterglow.node.surge;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.afterglow.metrics.ChainMeters;
import dev.afterglow.node.stats.NodeCounter;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * Reads a node's counters over its HTTP endpoints: {@code /status} (JSON) for each sensor's geometry,
 * chain and frame rate, {@code /metrics} (Prometheus text exposition) for every counter of
 * {@link NodeCounter}, the events that entered each sensor's first chain stage, and the pending
 * packets.
 */
final class NodeScrape {
    private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();
    private final ObjectMapper json = new ObjectMapper();
    /** Base URLs of the nodes read: one, or every member of a Kafka group (their counters are summed). */
    private final List<String> bases = new ArrayList<>();

    NodeScrape(String host, int port) {
        this(host, port, List.of());
    }

    /** @param more further nodes as host:port */
    NodeScrape(String host, int port, List<String> more) {
        bases.add("http://" + host + ":" + port);
        for (String m : more) {
            bases.add("http://" + m);
        }
    }

    /** A sensor as {@code /status} lists it. */
    record SensorStatus(String id, int width, int height, String chain, double frameRateHz) {
    }

    /** One sensor's counters at one moment. */
    record SensorCounts(long[] counters, long chainInput, long pending) {
        long get(NodeCounter c) {
            return counters[c.ordinal()];
        }
    }

    /** Counters of the watched sensors and the node-wide counters at one moment. */
    record Snapshot(Map<String, SensorCounts> sensors, long[] node) {
        SensorCounts sensor(String id) {
            SensorCounts c = sensors.get(id);
            return c != null ? c : new SensorCounts(new long[NodeCounter.values().length], 0, 0);
        }

        long node(NodeCounter c) {
            return node[c.ordinal()];
        }
    }

    /** The nodes' sensors, by id (a sensor that several nodes list: the first node's view). */
    Map<String, SensorStatus> status() throws IOException {
        Map<String, SensorStatus> out = new HashMap<>();
        for (String base : bases) {
            JsonNode root = json.readTree(get(base, "/status"));
            for (JsonNode s : root.path("sensors")) {
                out.putIfAbsent(s.path("id").asText(), new SensorStatus(s.path("id").asText(), s.path("width").asInt(),
                        s.path("height").asInt(), s.path("chain").asText(), s.path("frameRateHz").asDouble()));
            }
        }
        return out;
    }

    /** Counters of {@code sensorIds} (zeros for a sensor the node does not list) and the node's own. */
    Snapshot counters(Collection<String> sensorIds) throws IOException {
        Map<String, NodeCounter> byName = new HashMap<>();
        for (NodeCounter c : NodeCounter.values()) {
            byName.put(promName(c.meterName()), c);
        }
        String chainInput = promName(ChainMeters.EVENTS_IN + ".events");
        String pending = "afterglow_pending_packets";
        Map<String, long[]> counters = new HashMap<>();
        Map<String, long[]> extra = new HashMap<>(); // chain input, pending
        for (String id : sensorIds) {
            counters.put(id, new long[NodeCounter.values().length]);
            extra.put(id, new long[2]);
        }
        long[] node = new long[NodeCounter.values().length];
        for (String base : bases) {
            addCounts(get(base, "/metrics"), byName, chainInput, pending, counters, extra, node);
        }
        Map<String, SensorCounts> sensors = new HashMap<>();
        for (String id : sensorIds) {
            sensors.put(id, new SensorCounts(counters.get(id), extra.get(id)[0], extra.get(id)[1]));
        }
        return new Snapshot(sensors, node);
    }

    /** Adds one node's counters to the sums (a sensor that moved between nodes has counts on both). */
    private static void addCounts(String text, Map<String, NodeCounter> byName, String chainInput, String pending,
            Map<String, long[]> counters, Map<String, long[]> extra, long[] node) {
        for (String line : text.split("\n")) {
            if (line.isEmpty() || line.charAt(0) == '#') {
                continue;
            }
            Sample s = Sample.parse(line);
            if (s == null) {
                continue;
            }
            NodeCounter c = byName.get(s.name);
            String sensor = s.labels.get("sensor");
            if (c != null && c.scope() == NodeCounter.Scope.NODE) {
                node[c.ordinal()] += Math.round(s.value);
            } else if (sensor != null && counters.containsKey(sensor)) {
                if (c != null) {
                    counters.get(sensor)[c.ordinal()] += Math.round(s.value);
                } else if (s.name.equals(chainInput) && "0".equals(s.labels.get("position"))) {
                    extra.get(sensor)[0] += Math.round(s.value);
                } else if (s.name.equals(pending)) {
                    extra.get(sensor)[1] += Math.round(s.value);
                }
            }
        }
    }

    /** Prometheus name of a counter: dots to underscores plus {@code _total} (Prometheus naming conventions). */
    static String promName(String meterName) {
        return meterName.replace('.', '_') + "_total";
    }

    private String get(String base, String path) throws IOException {
        try {
            HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(base + path))
                    .timeout(Duration.ofSeconds(10)).GET().build(), HttpResponse.BodyHandlers.ofString());
            if (r.statusCode() != 200) {
                throw new IOException("GET " + base + path + ": HTTP " + r.statusCode());
            }
            return r.body();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IOException("interrupted reading " + base + path, e);
        } catch (java.net.ConnectException e) {
            throw new IOException("cannot reach the node's HTTP endpoints at " + base + " (--http)", e);
        }
    }

    /** One line of the text exposition format: {@code name{label="value",...} value [timestamp]}. */
    private record Sample(String name, Map<String, String> labels, double value) {
        static Sample parse(String line) {
            int brace = line.indexOf('{');
            int space = line.indexOf(' ');
            if (space < 0) {
                return null;
            }
            Map<String, String> labels = new HashMap<>();
            String name;
            int rest;
            if (brace >= 0 && brace < space) {
                name = line.substring(0, brace);
                int i = brace + 1;
                while (i < line.length() && line.charAt(i) != '}') {
                    int eq = line.indexOf('=', i);
                    if (eq < 0 || eq + 1 >= line.length() || line.charAt(eq + 1) != '"') {
                        return null;
                    }
                    String key = line.substring(i, eq).trim();
                    StringBuilder value = new StringBuilder();
                    int j = eq + 2;
                    for (; j < line.length() && line.charAt(j) != '"'; j++) {
                        char ch = line.charAt(j);
                        if (ch == '\\' && j + 1 < line.length()) {
                            char next = line.charAt(++j);
                            value.append(next == 'n' ? '\n' : next);
                        } else {
                            value.append(ch);
                        }
                    }
                    labels.put(key, value.toString());
                    i = j + 1;
                    if (i < line.length() && line.charAt(i) == ',') {
                        i++;
                    }
                }
                rest = i + 1;
            } else {
                name = line.substring(0, space);
                rest = space;
            }
            String[] fields = line.substring(Math.min(rest, line.length())).trim().split(" ");
            if (fields.length == 0 || fields[0].isEmpty()) {
                return null;
            }
            try {
                return new Sample(name, labels, Double.parseDouble(fields[0]));
            } catch (NumberFormatException e) {
                return null;
            }
        }
    }

    /** Sensor ids in {@code status} that are missing among {@code wanted}. */
    static List<String> missing(Map<String, SensorStatus> status, Collection<String> wanted) {
        List<String> out = new ArrayList<>();
        for (String id : wanted) {
            if (!status.containsKey(id)) {
                out.add(id);
            }
        }
        return out;
    }
}
