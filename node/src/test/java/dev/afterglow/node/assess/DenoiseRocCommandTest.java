package dev.afterglow.node.assess;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowCli;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import picocli.CommandLine;

/**
 * {@code afterglow denoise-roc}: option errors, and a small real run whose printed areas are
 * recomputed here from the CSV points by the trapezoid rule with the pass-all and drop-all end points.
 */
class DenoiseRocCommandTest {
    @TempDir
    Path tempDir;

    private record Result(int code, String out, String err) {
    }

    private static Result run(String... args) {
        StringWriter err = new StringWriter();
        PrintStream saved = System.out;
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        int code;
        try {
            System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
            CommandLine cl = AfterglowCli.commandLine();
            cl.setErr(new PrintWriter(err, true));
            code = cl.execute(args);
        } finally {
            System.setOut(saved);
        }
        return new Result(code, captured.toString(StandardCharsets.UTF_8), err.toString());
    }

    @ParameterizedTest
    @CsvSource(delimiter = '|', value = {
        "--seconds|100|--seconds=100.0 outside [0.2, 60]",
        "--scene|lobby|--scene=lobby: unknown; expected all or one of parcel-line",
        "--width|10|--width=10 outside [32, 1280]",
        "--noise|0|--noise=0 outside [0.1, 100]",
        "--noise|loud|--noise=loud: expected own or a rate in Hz",
        "--seeds|mine|--seeds=mine: expected tuning or validation",
    })
    void shouldRefuseBadOptionsWithOneLineNamingThem(String option, String value, String message) {
        Result r = run("denoise-roc", "--out", tempDir.toString(), option, value);
        assertEquals(2, r.code(), r.err());
        String text = r.err().trim();
        assertEquals(1, text.lines().count(), text);
        assertTrue(text.startsWith("afterglow: ") && text.contains(message), text);
    }

    @Test
    void shouldPrintAreasThatTheCsvPointsGiveAndOneBlockPerNoiseRate(@TempDir Path dir) throws Exception {
        Result r = run("denoise-roc", "--scene", "dock-door", "--width", "48", "--height", "36", "--seconds", "0.4",
                "--seeds", "tuning", "--noise", "own,5", "--out", dir.toString());
        assertEquals(0, r.code(), r.err());
        String out = r.out();
        assertTrue(out.contains("dock-door, background activity 1 Hz/pixel"), out);
        assertTrue(out.contains("dock-door, background activity 5 Hz/pixel"), out);
        assertTrue(out.contains("tuning seeds [7, 8, 9]"), out);

        List<String> csv = Files.readAllLines(dir.resolve("denoise-roc.csv"));
        assertEquals("scene,noise_hz,seeds,family,parameter,value,chain,background_removed,signal_kept,hot_removed,"
                + "signal_events,background_events,hot_events", csv.get(0));
        // 4 families x 23 windows + 2 defaults, for 2 rates.
        assertEquals(1 + 2 * (4 * 23 + 2), csv.size());
        for (String family : List.of("background-activity", "correlation k=2", "correlation k=3", "patch-support")) {
            for (String hz : List.of("1", "5")) {
                double area = area(csv, hz, family);
                String printed = String.format(Locale.ROOT, "%.4f", area);
                String block = out.substring(out.indexOf("background activity " + hz + " Hz/pixel"));
                Matcher m = Pattern.compile("  " + Pattern.quote(family) + " +([0-9.]+) ").matcher(block);
                assertTrue(m.find(), family + " missing in\n" + block);
                assertEquals(printed, m.group(1), family + " at " + hz + " Hz");
            }
        }
    }

    /** Trapezoids over the family's points sorted by noise removed, with (0, 1) and (1, 0) added. */
    private static double area(List<String> csv, String hz, String family) {
        List<double[]> pts = new ArrayList<>();
        pts.add(new double[] {0, 1});
        pts.add(new double[] {1, 0});
        for (String line : csv.subList(1, csv.size())) {
            String[] f = line.split(",(?=(?:[^\"]*\"[^\"]*\")*[^\"]*$)");
            if (f[1].equals(hz) && f[3].equals(family)) {
                pts.add(new double[] {Double.parseDouble(f[7]), Double.parseDouble(f[8])});
            }
        }
        pts.sort((a, b) -> a[0] != b[0] ? Double.compare(a[0], b[0]) : Double.compare(b[1], a[1]));
        double sum = 0;
        for (int i = 1; i < pts.size(); i++) {
            sum += (pts.get(i)[0] - pts.get(i - 1)[0]) * (pts.get(i)[1] + pts.get(i - 1)[1]) / 2;
        }
        return sum;
    }
}
