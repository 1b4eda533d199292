package dev.afterglow.node.cli;

import dev.afterglow.node.recording.BadEventLineException;
import dev.afterglow.node.recording.EventListImport;
import dev.afterglow.node.recording.EventTable;
import dev.afterglow.proto.v1.ClockDescription;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingWriter;
import java.io.BufferedReader;
import java.io.InputStreamReader;
import java.io.Reader;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** Turns a plain-text event list into a recording. */
@Command(name = "import-events", mixinStandardHelpOptions = true, sortOptions = false,
        description = {"Turn a plain-text event list (CSV or similar, one event per line) into an Afterglow recording.",
                "Lines starting with # and empty lines are skipped; a first line that is not numbers is taken as a header."})
public final class ImportEventsCommand implements Callable<Integer> {
    @Option(names = "--in", required = true, description = "The event list, or - for standard input.")
    String in;

    @Option(names = "--out", required = true, description = "Folder of the recording (created).")
    Path out;

    @Option(names = "--name", description = "Recording name: the segment files are NAME-000000.agrec, ... Default: the sensor id.")
    String name;

    @Option(names = "--sensor-id", required = true, description = "Sensor id to record in the hello.")
    String sensorId;

    @Option(names = "--width", required = true, description = "Sensor width, 1 .. 65536.")
    int width;

    @Option(names = "--height", required = true, description = "Sensor height, 1 .. 32768.")
    int height;

    @Mixin
    EventListOptions layout = new EventListOptions();

    @Option(names = "--packet-us", description = "Sensor time per packet, 1 .. 100000 us. Default: ${DEFAULT-VALUE}")
    long packetUs = 1000;

    @Option(names = "--skip-bad-lines", description = "Skip and count lines that cannot be imported instead of stopping at the first.")
    boolean skipBadLines;

    @Override
    public Integer call() throws Exception {
        Checks.range("--width", width, 1, 65536);
        Checks.range("--height", height, 1, 32768);
        EventTable table = layout.table();
        SensorHello hello = SensorHello.newBuilder().setSensorId(sensorId).setWidth(width).setHeight(height)
                .setClock(ClockDescription.newBuilder().setSource("imported").setTickNs(1000)).build();
        EventListImport importer = new EventListImport(table, hello, packetUs, skipBadLines);
        long startUnixUs = System.currentTimeMillis() * 1000;
        try (Reader reader = in.equals("-") ? new BufferedReader(new InputStreamReader(System.in, StandardCharsets.UTF_8))
                : Files.newBufferedReader(Path.of(in), StandardCharsets.UTF_8)) {
            EventListImport.Result r = importer.run(reader, out, name == null ? sensorId : name,
                    RecordingWriter.Settings.keepAll(), startUnixUs);
            System.out.printf(Locale.ROOT, "afterglow import-events: %d events in %d packets, sensor time %d .. %d us, into %s%n",
                    r.events(), r.packets(), r.firstUs(), r.lastUs(), r.segments().get(0).getParent());
            if (r.badLines() > 0) {
                System.out.printf(Locale.ROOT, "afterglow import-events: skipped %d bad lines; the first: %s%n", r.badLines(), r.firstBadLine());
            }
        } catch (BadEventLineException e) {
            System.err.println("afterglow import-events: " + in + ", " + e.getMessage() + " (--skip-bad-lines skips such lines)");
            return 1;
        }
        return 0;
    }
}
