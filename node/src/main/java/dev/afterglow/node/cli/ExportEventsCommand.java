package dev.afterglow.node.cli;

import dev.afterglow.node.recording.EventListExport;
import java.io.BufferedWriter;
import java.io.OutputStreamWriter;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** Writes the events of a recording as a plain-text list. */
@Command(name = "export-events", mixinStandardHelpOptions = true, sortOptions = false,
        description = "Write the events of an Afterglow recording as a plain-text list, one event per line.")
public final class ExportEventsCommand implements Callable<Integer> {
    @Option(names = "--in", required = true, description = "A recording: a segment file or the folder of its segments.")
    Path in;

    @Option(names = "--out", required = true, description = "The list to write, or - for standard output.")
    String out;

    @Mixin
    EventListOptions layout = new EventListOptions();

    @Option(names = "--header", description = "Write a first line naming the columns.")
    boolean header;

    @Override
    public Integer call() throws Exception {
        EventListExport export = new EventListExport(layout.table(), header);
        EventListExport.Result r;
        boolean toStdout = out.equals("-");
        try (Writer w = toStdout ? new BufferedWriter(new OutputStreamWriter(System.out, StandardCharsets.UTF_8), 1 << 16)
                : Files.newBufferedWriter(Path.of(out), StandardCharsets.UTF_8)) {
            r = export.run(in, w);
        }
        for (String p : r.problems()) {
            System.err.println("afterglow export-events: " + p);
        }
        (toStdout ? System.err : System.out).printf(Locale.ROOT, "afterglow export-events: %d events from %d packets%n",
                r.events(), r.packets());
        return r.problems().isEmpty() ? 0 : 1;
    }
}
