package dev.afterglow.node.recording;

import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.recording.RecordingReader;
import java.io.IOException;
import java.io.Writer;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Path;
import java.util.List;

/**
 * Writes the events of a recording as a plain-text list, one event per line in the columns, unit
 * and polarity an {@link EventTable} says ({@code _} columns are not allowed here). Times in
 * seconds or milliseconds are written with the decimals that keep microseconds exact. Sensor
 * frames are not exported.
 */
public final class EventListExport {

    /** What an export wrote, and the recording's damage if any. */
    public record Result(long events, long packets, List<String> problems) {
    }

    private final EventTable table;
    private final boolean header;

    /** @param header write a first line naming the columns */
    public EventListExport(EventTable table, boolean header) {
        if (table.columns().contains("_")) {
            throw new IllegalArgumentException("--columns: _ (skip) has no meaning for an export");
        }
        this.table = table;
        this.header = header;
    }

    /** Reads {@code recording} (a segment file or a folder of segments) and writes its events to {@code out}. */
    public Result run(Path recording, Writer out) throws IOException {
        String sep = String.valueOf(table.separator());
        if (header) {
            out.write(String.join(sep, table.columns()) + "\n");
        }
        long events = 0;
        long packets = 0;
        StringBuilder line = new StringBuilder(64);
        String[] values = new String[4];
        try (RecordingReader r = RecordingReader.open(recording)) {
            for (RecordingReader.Item item; (item = r.next()) != null; ) {
                if (!item.envelope().hasEvents()) {
                    continue;
                }
                EventPacket p = item.envelope().getEvents();
                ByteBuffer b = p.getEvents().asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN);
                int n = b.remaining() / 8;
                for (int i = 0; i < n; i++) {
                    long t = p.getTimeBaseUs() + (b.getInt(8 * i) & 0xFFFFFFFFL);
                    int yp = b.getShort(8 * i + 6) & 0xFFFF;
                    values[0] = time(t);
                    values[1] = Integer.toString(b.getShort(8 * i + 4) & 0xFFFF);
                    values[2] = Integer.toString(yp & 0x7FFF);
                    values[3] = (yp & 0x8000) != 0 ? "1" : Integer.toString(table.offPolarity());
                    line.setLength(0);
                    for (int c = 0; c < table.columns().size(); c++) {
                        if (c > 0) {
                            line.append(table.separator());
                        }
                        line.append(values["txyp".indexOf(table.columns().get(c))]);
                    }
                    out.write(line.append('\n').toString());
                }
                events += n;
                packets++;
            }
            return new Result(events, packets, r.problems());
        }
    }

    private String time(long us) {
        long unit = table.unitNanos();
        if (unit == 1) {
            return Long.toString(us * 1000);
        }
        if (unit == 1000) {
            return Long.toString(us);
        }
        long perUnit = unit / 1000; // 1000 (ms) or 1 000 000 (s)
        int digits = perUnit == 1000 ? 3 : 6;
        long whole = us / perUnit;
        long frac = us % perUnit;
        String f = Long.toString(frac);
        return whole + "." + "0".repeat(digits - f.length()) + f;
    }
}
