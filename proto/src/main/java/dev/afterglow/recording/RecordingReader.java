package dev.afterglow.recording;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IndexEntry;
import dev.afterglow.proto.v1.RecordedEnvelope;
import dev.afterglow.proto.v1.RecordingHeader;
import java.io.Closeable;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;

/**
 * Reads a recording's envelopes in order across its segments, skipping index records. Damage in a
 * segment (a torn or corrupt record) ends that segment: it is reported in {@link #problems()} and
 * reading goes on with the next segment. {@link #seekToSensorTime} starts from the index entry at
 * or before a sensor time. Single-threaded.
 */
public final class RecordingReader implements Closeable {

    /** One recorded envelope: its arrival time, the envelope, its bytes exactly as received, and where it is stored. */
    public record Item(long arrivalUs, Envelope envelope, com.google.protobuf.ByteString bytes, Path segment, long offset) {
    }

    private final List<Path> segments;
    private final List<String> problems = new ArrayList<>();
    private int current = -1;
    private SegmentReader reader;
    private RecordingHeader firstHeader;

    private RecordingReader(List<Path> segments) {
        this.segments = segments;
    }

    /**
     * Opens a recording: a segment file, or a folder whose {@code *.agrec} files are the segments
     * of one recording (read in file-name order, which is segment order).
     *
     * @throws IOException if there is no segment, or the first segment is not readable as one
     */
    public static RecordingReader open(Path fileOrFolder) throws IOException {
        List<Path> segments = new ArrayList<>();
        if (Files.isDirectory(fileOrFolder)) {
            try (Stream<Path> files = Files.list(fileOrFolder)) {
                files.filter(p -> p.getFileName().toString().endsWith(RecordFormat.EXTENSION)).sorted().forEach(segments::add);
            }
        } else {
            segments.add(fileOrFolder);
        }
        if (segments.isEmpty()) {
            throw new RecordingFormatException(fileOrFolder + ": no " + RecordFormat.EXTENSION + " segment files");
        }
        RecordingReader r = new RecordingReader(segments);
        r.advanceSegment();
        if (r.reader == null) {
            throw new RecordingFormatException(String.join("; ", r.problems));
        }
        r.firstHeader = r.reader.header();
        return r;
    }

    /** The first segment's header: the sensor's hello, the writer, the start time. */
    public RecordingHeader header() {
        return firstHeader;
    }

    /** The next envelope, or null at the end of the last segment. */
    public Item next() throws IOException {
        while (reader != null) {
            SegmentReader.Record r = reader.next();
            if (r == null) {
                if (reader.stop() != SegmentReader.Stop.END) {
                    problems.add(reader.describeStop());
                }
                advanceSegment();
                continue;
            }
            if (r.kind() != RecordFormat.ENVELOPE) {
                continue;
            }
            try {
                RecordedEnvelope e = RecordedEnvelope.parseFrom(r.input()); // copies what it keeps: the buffer is reused
                return new Item(e.getArrivalUs(), Envelope.parseFrom(e.getEnvelope()), e.getEnvelope(), reader.path(), r.offset());
            } catch (InvalidProtocolBufferException e) {
                // The CRC matched, so the writer wrote it this way: report it and go on.
                problems.add(reader.path() + ": record at byte " + r.offset() + " does not parse: " + e.getMessage());
            }
        }
        return null;
    }

    /**
     * Positions the reader at the last indexed record whose sensor time is at or before
     * {@code sensorTimeUs} (the recording's first record if none is), so the following
     * {@link #next} calls give the records from there; records just before the target may come
     * first. Returns the sensor time of the record positioned at, or -1 for the start.
     */
    public long seekToSensorTime(long sensorTimeUs) throws IOException {
        int bestSegment = -1;
        IndexEntry best = null;
        for (int s = 0; s < segments.size(); s++) {
            try (SegmentReader r = new SegmentReader(segments.get(s))) {
                for (IndexEntry e : r.readIndex()) {
                    if (e.getSensorTimeUs() <= sensorTimeUs && (best == null || e.getSensorTimeUs() >= best.getSensorTimeUs())) {
                        best = e;
                        bestSegment = s;
                    }
                }
            } catch (RecordingFormatException e) {
                // an unreadable segment has no index to offer
            }
        }
        closeReader();
        current = best == null ? -1 : bestSegment - 1;
        advanceSegment();
        if (best != null && reader != null) {
            reader.seek(best.getOffset());
        }
        return best == null ? -1 : best.getSensorTimeUs();
    }

    private void advanceSegment() throws IOException {
        closeReader();
        while (++current < segments.size()) {
            try {
                reader = new SegmentReader(segments.get(current));
                return;
            } catch (RecordingFormatException e) {
                problems.add(e.getMessage());
            }
        }
    }

    private void closeReader() throws IOException {
        if (reader != null) {
            reader.close();
            reader = null;
        }
    }

    /** What was wrong with the segments read so far (torn or corrupt records, unreadable files); empty if nothing. */
    public List<String> problems() {
        return List.copyOf(problems);
    }

    /** The segment files of the recording, in order. */
    public List<Path> segments() {
        return List.copyOf(segments);
    }

    @Override
    public void close() throws IOException {
        closeReader();
    }
}
