package dev.afterglow.node.surge;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/** The sweep's table (fixed-width text), its CSV (same columns, one row per step) and its consistency lines. */
public final class SurgeReport {
    private SurgeReport() {
    }

    /** The table: a header and one row per step, columns as in {@link StepResult#COLUMNS}. */
    public static List<String> table(List<StepResult> steps) {
        List<StepResult.Column> cols = StepResult.COLUMNS;
        int[] width = new int[cols.size()];
        for (int c = 0; c < cols.size(); c++) {
            width[c] = cols.get(c).name().length();
            for (StepResult s : steps) {
                width[c] = Math.max(width[c], cell(s.value(cols.get(c))).length());
            }
        }
        List<String> lines = new ArrayList<>();
        StringBuilder header = new StringBuilder();
        for (int c = 0; c < cols.size(); c++) {
            header.append(c == 0 ? "" : "  ").append(pad(cols.get(c).name(), width[c]));
        }
        lines.add(header.toString());
        for (StepResult s : steps) {
            lines.add(row(s, width));
        }
        return lines;
    }

    /** One step's row, padded to the given column widths. */
    static String row(StepResult s, int[] width) {
        StringBuilder b = new StringBuilder();
        List<StepResult.Column> cols = StepResult.COLUMNS;
        for (int c = 0; c < cols.size(); c++) {
            b.append(c == 0 ? "" : "  ").append(pad(cell(s.value(cols.get(c))), width[c]));
        }
        return b.toString();
    }

    private static String cell(String v) {
        return v.isEmpty() ? "-" : v;
    }

    private static String pad(String s, int w) {
        return " ".repeat(Math.max(0, w - s.length())) + s;
    }

    /** Writes the CSV: a header of column names, then one row per step (empty field: no value). */
    public static void writeCsv(Path file, List<StepResult> steps) throws IOException {
        List<String> lines = new ArrayList<>();
        List<String> names = new ArrayList<>();
        for (StepResult.Column c : StepResult.COLUMNS) {
            names.add(c.name());
        }
        lines.add(String.join(",", names));
        for (StepResult s : steps) {
            List<String> values = new ArrayList<>();
            for (StepResult.Column c : StepResult.COLUMNS) {
                values.add(s.value(c));
            }
            lines.add(String.join(",", values));
        }
        Files.write(file, lines, StandardCharsets.UTF_8);
    }

    /** Prints the table and the consistency lines. */
    public static void print(PrintStream out, List<StepResult> steps) {
        for (String line : table(steps)) {
            out.println(line);
        }
        for (StepResult s : steps) {
            out.println(s.consistencyLine());
        }
    }
}
