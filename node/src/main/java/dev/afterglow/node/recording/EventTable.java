package dev.afterglow.node.recording;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * How a plain-text event list is laid out: which column holds t, x, y and p (others are ignored),
 * the separator, the time unit, and how polarity is written.
 *
 * @param columns column names in file order; each of t, x, y, p exactly once, {@code _} for a column to ignore
 * @param separator the field separator; {@code ' '} also accepts runs of spaces and tabs
 * @param unitNanos length of one time unit in nanoseconds (1000 for microseconds)
 * @param offPolarity how an OFF event is written on export: 0 or -1 (import accepts both, and any value &gt; 0 as ON)
 */
public record EventTable(List<String> columns, char separator, long unitNanos, int offPolarity) {

    /** Checks the layout. */
    public EventTable {
        columns = List.copyOf(columns);
        for (String need : List.of("t", "x", "y", "p")) {
            if (columns.stream().filter(need::equals).count() != 1) {
                throw new IllegalArgumentException("--columns " + String.join(",", columns) + ": name t, x, y and p once each (_ for a column to skip)");
            }
        }
        for (String c : columns) {
            if (!List.of("t", "x", "y", "p", "_").contains(c)) {
                throw new IllegalArgumentException("--columns: unknown column '" + c + "' (t, x, y, p or _)");
            }
        }
        if (offPolarity != 0 && offPolarity != -1) {
            throw new IllegalArgumentException("--polarity: OFF is written 0 or -1, not " + offPolarity);
        }
    }

    /**
     * Parses the command-line forms: columns {@code t,x,y,p}; separator {@code comma}, {@code space}
     * (runs of spaces or tabs), {@code tab}, {@code semicolon} or one character; unit {@code s},
     * {@code ms}, {@code us} or {@code ns}; polarity {@code 1/0} or {@code 1/-1}.
     */
    public static EventTable parse(String columns, String separator, String unit, String polarity) {
        List<String> cols = new ArrayList<>();
        for (String c : columns.split(",", -1)) {
            cols.add(c.trim().toLowerCase(Locale.ROOT));
        }
        char sep = switch (separator) {
            case "comma", "," -> ',';
            case "space", " " -> ' ';
            case "tab", "\t" -> '\t';
            case "semicolon", ";" -> ';';
            default -> {
                if (separator.length() != 1 || Character.isLetterOrDigit(separator.charAt(0))
                        || separator.charAt(0) == '-' || separator.charAt(0) == '.') {
                    throw new IllegalArgumentException("--separator '" + separator
                            + "': comma, space, tab, semicolon or one other character that is no digit, letter, '-' or '.'");
                }
                yield separator.charAt(0);
            }
        };
        long nanos = switch (unit) {
            case "s" -> 1_000_000_000L;
            case "ms" -> 1_000_000L;
            case "us" -> 1_000L;
            case "ns" -> 1L;
            default -> throw new IllegalArgumentException("--time-unit '" + unit + "': s, ms, us or ns");
        };
        int off = switch (polarity) {
            case "1/0" -> 0;
            case "1/-1" -> -1;
            default -> throw new IllegalArgumentException("--polarity '" + polarity + "': 1/0 or 1/-1");
        };
        return new EventTable(cols, sep, nanos, off);
    }

    /** Index of a column in the file. */
    int indexOf(String column) {
        return columns.indexOf(column);
    }
}
