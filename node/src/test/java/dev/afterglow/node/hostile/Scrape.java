package dev.afterglow.node.hostile;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * One {@code /metrics} answer parsed as the Prometheus text exposition format 0.0.4
 * (prometheus.io/docs/instrumenting/exposition_formats: {@code name{label="value",...} value}
 * per line, {@code #} starts a comment, label values escape {@code \\ \" \n}).
 */
final class Scrape {
    /** One sample line. */
    record Sample(String name, Map<String, String> labels, double value) {
    }

    private final List<Sample> samples;

    private Scrape(List<Sample> samples) {
        this.samples = samples;
    }

    /** Parses a whole answer; a line that does not follow the format is an error. */
    static Scrape parse(String text) {
        List<Sample> out = new ArrayList<>();
        for (String line : text.split("\n")) {
            if (line.isBlank() || line.startsWith("#")) {
                continue;
            }
            out.add(sample(line));
        }
        return new Scrape(out);
    }

    private static Sample sample(String line) {
        int brace = line.indexOf('{');
        int space = line.indexOf(' ');
        String name;
        Map<String, String> labels = new HashMap<>();
        int rest;
        if (brace >= 0 && (space < 0 || brace < space)) {
            name = line.substring(0, brace);
            int i = brace + 1;
            while (line.charAt(i) != '}') {
                int eq = line.indexOf('=', i);
                String key = line.substring(i, eq).trim();
                if (line.charAt(eq + 1) != '"') {
                    throw new IllegalArgumentException("label value not quoted: " + line);
                }
                StringBuilder value = new StringBuilder();
                int j = eq + 2;
                for (; line.charAt(j) != '"'; j++) {
                    char c = line.charAt(j);
                    if (c == '\\') {
                        char n = line.charAt(++j);
                        value.append(n == 'n' ? '\n' : n);
                    } else {
                        value.append(c);
                    }
                }
                labels.put(key, value.toString());
                i = j + 1;
                if (line.charAt(i) == ',') {
                    i++;
                }
            }
            rest = i + 1;
        } else {
            if (space < 0) {
                throw new IllegalArgumentException("no value: " + line);
            }
            name = line.substring(0, space);
            rest = space;
        }
        String[] parts = line.substring(rest).trim().split(" +");
        return new Sample(name, labels, parseValue(parts[0], line));
    }

    private static double parseValue(String text, String line) {
        switch (text) {
            case "+Inf":
                return Double.POSITIVE_INFINITY;
            case "-Inf":
                return Double.NEGATIVE_INFINITY;
            case "NaN":
                return Double.NaN;
            default:
                try {
                    return Double.parseDouble(text);
                } catch (NumberFormatException e) {
                    throw new IllegalArgumentException("bad value in: " + line, e);
                }
        }
    }

    /** Sum of samples named {@code name} (0 if there are none): a node-wide counter. */
    double value(String name) {
        double sum = 0;
        for (Sample s : samples) {
            if (s.name.equals(name)) {
                sum += s.value;
            }
        }
        return sum;
    }

    /** Sum of samples named {@code name} with label {@code sensor} (0 if none). */
    double sensor(String name, String sensor) {
        double sum = 0;
        for (Sample s : samples) {
            if (s.name.equals(name) && sensor.equals(s.labels.get("sensor"))) {
                sum += s.value;
            }
        }
        return sum;
    }

    /** {@link #sensor} as a whole number. */
    long count(String name, String sensor) {
        return Math.round(sensor(name, sensor));
    }

    /** {@link #value} as a whole number. */
    long count(String name) {
        return Math.round(value(name));
    }

    /** True if any sample has this name. */
    boolean has(String name) {
        return samples.stream().anyMatch(s -> s.name.equals(name));
    }

    /** True if some sample carries label {@code sensor=id}. */
    boolean mentions(String sensorId) {
        return samples.stream().anyMatch(s -> sensorId.equals(s.labels.get("sensor")));
    }

    /** Counters ({@code _total}) whose value is negative or not finite: a counter never goes down (format spec, "counter"). */
    List<String> brokenCounters() {
        List<String> out = new ArrayList<>();
        for (Sample s : samples) {
            if (s.name.endsWith("_total") && !(s.value >= 0 && Double.isFinite(s.value))) {
                out.add(s.name + s.labels + "=" + s.value);
            }
        }
        return out;
    }

    /** The sensor's counters ({@code _total}, without the common prefix) that are not zero, for messages. */
    String sensorCounters(String sensor) {
        java.util.TreeMap<String, Long> out = new java.util.TreeMap<>();
        for (Sample s : samples) {
            if (s.name.endsWith("_total") && sensor.equals(s.labels.get("sensor")) && s.labels.size() == 1 && s.value != 0) {
                out.merge(s.name.replaceFirst("^afterglow_", "").replaceFirst("_total$", ""), Math.round(s.value), Long::sum);
            }
        }
        return out.toString();
    }

    int size() {
        return samples.size();
    }
}
