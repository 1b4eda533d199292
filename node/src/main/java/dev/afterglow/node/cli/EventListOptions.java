package dev.afterglow.node.cli;

import dev.afterglow.node.recording.EventTable;
import picocli.CommandLine.Option;

/** The layout options shared by {@code import-events} and {@code export-events}. */
public final class EventListOptions {
    @Option(names = "--columns", description = "Column order, each of t, x, y, p once; _ skips a column (import only). Default: ${DEFAULT-VALUE}")
    String columns = "t,x,y,p";

    @Option(names = "--separator", description = "comma, space (runs of spaces), tab, semicolon or one other character. Default: ${DEFAULT-VALUE}")
    String separator = "comma";

    @Option(names = "--time-unit", description = "s, ms, us or ns (s and ms may have decimals). Default: ${DEFAULT-VALUE}")
    String timeUnit = "us";

    @Option(names = "--polarity", description = "How ON/OFF are written: 1/0 or 1/-1 (import reads any value > 0 as ON). Default: ${DEFAULT-VALUE}")
    String polarity = "1/0";

    /** The layout these options describe. */
    public EventTable table() {
        return EventTable.parse(columns, separator, timeUnit, polarity);
    }
}
