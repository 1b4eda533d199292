package dev.afterglow.node.recording;

import com.google.protobuf.ByteString;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingWriter;
import java.io.IOException;
import java.io.Reader;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Path;
import java.util.List;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVParser;
import org.apache.commons.csv.CSVRecord;

/**
 * Turns a plain-text event list (one event per line, columns as an {@link EventTable} says; lines
 * starting with {@code #} and empty lines skipped; a first line that is not numbers taken as a
 * header) into a recording of event packets, as if a sensor had sent them: each packet covers at
 * most {@code packetUs} of sensor time and "arrives" at the time of its last event, counted from
 * the list's first event. A line that does not parse, a pixel outside the sensor or a time before
 * the previous line's is an error naming the line, or, with {@code skipBadLines}, skipped and
 * counted. Parsing is Apache Commons CSV's (quoting and line endings handled as RFC 4180 says).
 */
public final class EventListImport {
    /** Events per packet at most: 128 KiB of records, well inside the node's default message limit. */
    static final int MAX_PACKET_EVENTS = 16_384;
    private static final java.util.regex.Pattern WHITESPACE = java.util.regex.Pattern.compile("[ \t]+");

    /** What an import did. */
    public record Result(long events, long packets, long badLines, String firstBadLine, long firstUs, long lastUs,
            List<Path> segments) {
    }

    private final EventTable table;
    private final SensorHello hello;
    private final long packetUs;
    private final boolean skipBadLines;
    private final ByteBuffer records = ByteBuffer.allocate(8 * MAX_PACKET_EVENTS).order(ByteOrder.LITTLE_ENDIAN);
    private int inPacket;
    private long packetBaseUs;
    private long packetLastUs;
    private long sequence;
    private long firstUs = -1;
    private long lastUs = -1;
    private long events;
    private long badLines;
    private String firstBadLine;

    /**
     * @param hello the sensor the list came from (id, width, height)
     * @param packetUs sensor time per packet, 1 .. 100 000 us
     */
    public EventListImport(EventTable table, SensorHello hello, long packetUs, boolean skipBadLines) {
        if (packetUs < 1 || packetUs > 100_000) {
            throw new IllegalArgumentException("--packet-us " + packetUs + " outside 1 .. 100000");
        }
        this.table = table;
        this.hello = hello;
        this.packetUs = packetUs;
        this.skipBadLines = skipBadLines;
    }

    /**
     * Reads the list from {@code in} and writes recording {@code name} into {@code folder}.
     *
     * @throws BadEventLineException on a bad line (without skipBadLines), naming it
     */
    public Result run(Reader in, Path folder, String name, RecordingWriter.Settings settings, long startUnixUs)
            throws IOException {
        CSVFormat format = CSVFormat.DEFAULT.builder().setDelimiter(table.separator()).setCommentMarker('#')
                .setIgnoreEmptyLines(true).setIgnoreSurroundingSpaces(true).get();
        int ti = table.indexOf("t");
        int xi = table.indexOf("x");
        int yi = table.indexOf("y");
        int pi = table.indexOf("p");
        int width = table.columns().size();
        boolean runsOfSpaces = table.separator() == ' ';
        String[] fields = new String[width];
        try (RecordingWriter out = RecordingWriter.create(folder, name, hello, "afterglow import-events", startUnixUs, settings);
                CSVParser parser = CSVParser.builder().setReader(in).setFormat(format).get()) {
            out.write(0, Envelope.newBuilder().setSchemaVersion(1).setHello(hello).build());
            boolean first = true;
            for (CSVRecord r : parser) {
                long line = parser.getCurrentLineNumber(); // the line this record ended on
                int n = 0;
                for (String v : r) {
                    if (runsOfSpaces) {
                        // any run of spaces and tabs separates one pair of fields
                        for (String part : WHITESPACE.split(v)) {
                            if (!part.isEmpty()) {
                                if (n < width) {
                                    fields[n] = part;
                                }
                                n++;
                            }
                        }
                        continue;
                    }
                    if (n < width) {
                        fields[n] = v;
                    }
                    n++;
                }
                if (n != width) {
                    bad(line, n + " fields where --columns names " + width);
                    continue;
                }
                long t;
                long x;
                long y;
                double p;
                try {
                    t = toMicros(fields[ti]);
                    x = Long.parseLong(fields[xi]);
                    y = Long.parseLong(fields[yi]);
                    p = Double.parseDouble(fields[pi]);
                } catch (NumberFormatException e) {
                    if (first) {
                        first = false; // a header line
                        continue;
                    }
                    bad(line, "not a number: " + e.getMessage());
                    continue;
                }
                first = false;
                if (x < 0 || x >= hello.getWidth() || y < 0 || y >= hello.getHeight()) {
                    bad(line, "pixel (" + x + ", " + y + ") outside the " + hello.getWidth() + "x" + hello.getHeight() + " sensor");
                    continue;
                }
                if (t < 0 || t >= (1L << 52)) {
                    bad(line, "time " + fields[ti] + " outside 0 .. 2^52 us");
                    continue;
                }
                if (t < lastUs) {
                    bad(line, "time goes backwards: " + t + " us after " + lastUs + " us");
                    continue;
                }
                add(out, t, (int) x, (int) y, p > 0);
            }
            flushPacket(out);
            return new Result(events, sequence, badLines, firstBadLine, firstUs, lastUs, out.segments());
        }
    }

    private long toMicros(String v) {
        long unit = table.unitNanos();
        if (v.indexOf('.') < 0 && v.indexOf('e') < 0 && v.indexOf('E') < 0) {
            long whole = Long.parseLong(v);
            return unit >= 1000 ? Math.multiplyExact(whole, unit / 1000) : Math.floorDiv(whole, 1000 / unit);
        }
        double d = Double.parseDouble(v);
        if (!Double.isFinite(d)) {
            throw new NumberFormatException("time " + v);
        }
        return Math.round(d * unit / 1000.0);
    }

    private void bad(long line, String why) {
        String message = "line " + line + ": " + why;
        if (!skipBadLines) {
            throw new BadEventLineException(message);
        }
        if (badLines++ == 0) {
            firstBadLine = message;
        }
    }

    private void add(RecordingWriter out, long t, int x, int y, boolean on) throws IOException {
        if (inPacket > 0 && (t - packetBaseUs >= packetUs || inPacket == MAX_PACKET_EVENTS)) {
            flushPacket(out);
        }
        if (inPacket == 0) {
            packetBaseUs = t;
        }
        if (firstUs < 0) {
            firstUs = t;
        }
        records.putInt((int) (t - packetBaseUs)).putShort((short) x).putShort((short) (y | (on ? 0x8000 : 0)));
        inPacket++;
        packetLastUs = t;
        lastUs = t;
        events++;
    }

    private void flushPacket(RecordingWriter out) throws IOException {
        if (inPacket == 0) {
            return;
        }
        EventPacket packet = EventPacket.newBuilder().setSequence(sequence++).setTimeBaseUs(packetBaseUs)
                .setEventCount(inPacket).setEvents(ByteString.copyFrom(records.array(), 0, 8 * inPacket)).build();
        out.write(packetLastUs - firstUs, Envelope.newBuilder().setSchemaVersion(1).setEvents(packet).build());
        records.clear();
        inPacket = 0;
    }
}
