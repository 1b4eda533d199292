package dev.afterglow.recording;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IndexEntry;
import dev.afterglow.proto.v1.RecordedEnvelope;
import dev.afterglow.proto.v1.RecordingHeader;
import dev.afterglow.proto.v1.RecordingIndex;
import dev.afterglow.proto.v1.SensorHello;
import java.io.Closeable;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.Deque;
import java.util.List;

/**
 * Writes one sensor's recording as segment files {@code NAME-000000.agrec}, {@code NAME-000001.agrec}, ...
 * in a folder: rotates to a new segment by size or by duration, writes an index record every
 * {@code indexIntervalUs} of arrival time, flushes (and optionally forces to the device) every
 * {@code flushIntervalUs}, and, as a flight recorder, deletes the oldest closed segments beyond a
 * retention in bytes or time. Sensor tokens are never written. Single-threaded: one writer per
 * sensor, on a thread of its own (not the pipeline's).
 */
public final class RecordingWriter implements Closeable {

    /**
     * How a recording is cut and kept.
     *
     * @param maxSegmentBytes a segment is closed once it holds this many bytes (at least 4 KiB)
     * @param maxSegmentUs a segment is closed once it spans this much arrival time
     * @param indexIntervalUs arrival time between index records
     * @param flushIntervalUs arrival time between flushes: at most this much is lost in a crash
     * @param sync force flushed data to the device (fsync), not only to the operating system
     * @param retainBytes flight recorder: closed segments are deleted, oldest first, while the others
     *     still hold this many bytes, so the newest retainBytes are always kept and at most one
     *     segment more; {@link Long#MAX_VALUE} keeps everything
     * @param retainUs flight recorder: closed segments whose last record arrived more than this long
     *     before the newest record are deleted; {@link Long#MAX_VALUE} keeps everything
     */
    public record Settings(long maxSegmentBytes, long maxSegmentUs, long indexIntervalUs, long flushIntervalUs,
            boolean sync, long retainBytes, long retainUs) {
        /** Keeps everything; 256 MiB or 10 min segments, an index every second, flushed and synced every second. */
        public static Settings keepAll() {
            return new Settings(256L << 20, 600_000_000L, 1_000_000L, 1_000_000L, true, Long.MAX_VALUE, Long.MAX_VALUE);
        }

        /** Checks the values. */
        public Settings {
            if (maxSegmentBytes < 4096 || maxSegmentUs < 1 || indexIntervalUs < 1 || flushIntervalUs < 0
                    || retainBytes < 1 || retainUs < 1) {
                throw new IllegalArgumentException("recording settings out of range: " + maxSegmentBytes + " bytes, "
                        + maxSegmentUs + " us, index " + indexIntervalUs + " us, flush " + flushIntervalUs
                        + " us, retain " + retainBytes + " bytes / " + retainUs + " us");
            }
        }

        /** The same, as a flight recorder keeping at most {@code bytes} and {@code us} of arrival time. */
        public Settings retaining(long bytes, long us) {
            return new Settings(maxSegmentBytes, maxSegmentUs, indexIntervalUs, flushIntervalUs, sync, bytes, us);
        }

        /** The same with other segment limits. */
        public Settings segments(long bytes, long us) {
            return new Settings(bytes, us, indexIntervalUs, flushIntervalUs, sync, retainBytes, retainUs);
        }
    }

    /** A closed segment still on disk: its file, size and last arrival time. */
    private record Closed(Path path, long bytes, long lastArrivalUs) {
    }

    private final Path folder;
    private final String name;
    private final RecordingHeader.Builder header;
    private final Settings settings;
    private final Deque<Closed> closed = new ArrayDeque<>();
    private final List<IndexEntry> pendingIndex = new ArrayList<>();
    private SegmentWriter segment;
    private int segmentNumber;
    private long segmentFirstArrivalUs = -1;
    private long lastArrivalUs;
    private long lastIndexUs;
    private long lastFlushUs;
    private long closedBytes;
    private long segmentsDeleted;

    private RecordingWriter(Path folder, String name, RecordingHeader.Builder header, Settings settings) {
        this.folder = folder;
        this.name = name;
        this.header = header;
        this.settings = settings;
    }

    /**
     * Starts a recording named {@code name} in {@code folder} (created if missing) with its first segment.
     *
     * @param hello the sensor's hello as accepted; its token is not written
     * @param writer who writes, e.g. "afterglow 0.1.0"
     * @param startUnixUs host wall-clock time of the start, Unix microseconds
     * @throws IOException if the folder or the first segment cannot be created, or a segment of that name exists
     */
    public static RecordingWriter create(Path folder, String name, SensorHello hello, String writer, long startUnixUs,
            Settings settings) throws IOException {
        if (!name.matches("[A-Za-z0-9._-]{1,100}")) {
            throw new IllegalArgumentException("recording name '" + name + "': use 1 to 100 of A-Z a-z 0-9 . _ -");
        }
        Files.createDirectories(folder);
        RecordingHeader.Builder h = RecordingHeader.newBuilder()
                .setFormatVersion(RecordFormat.VERSION)
                .setHello(hello.toBuilder().clearToken())
                .setWriter(writer)
                .setRecordingStartUnixUs(startUnixUs);
        RecordingWriter w = new RecordingWriter(folder, name, h, settings);
        w.openSegment();
        return w;
    }

    /** The file name of segment {@code number} of recording {@code name}. */
    public static String segmentFileName(String name, int number) {
        return String.format("%s-%06d%s", name, number, RecordFormat.EXTENSION);
    }

    private void openSegment() throws IOException {
        header.setSegmentNumber(segmentNumber);
        segment = new SegmentWriter(folder.resolve(segmentFileName(name, segmentNumber)), header.build());
        segmentFirstArrivalUs = -1;
    }

    /**
     * Appends one envelope (a hello, event packet or sensor frame) that arrived {@code arrivalUs}
     * after the recording's start (host monotonic clock); flushes, indexes, rotates and retires
     * segments as the settings say.
     */
    public void write(long arrivalUs, Envelope envelope) throws IOException {
        if (segment.size() >= settings.maxSegmentBytes()
                || (segmentFirstArrivalUs >= 0 && arrivalUs - segmentFirstArrivalUs >= settings.maxSegmentUs())) {
            rotate();
        }
        Envelope stored = envelope.hasHello() && !envelope.getHello().getToken().isEmpty()
                ? envelope.toBuilder().setHello(envelope.getHello().toBuilder().clearToken()).build() : envelope;
        byte[] payload = RecordedEnvelope.newBuilder().setArrivalUs(arrivalUs)
                .setEnvelope(stored.toByteString()).build().toByteArray();
        long offset = segment.append(RecordFormat.ENVELOPE, payload);
        if (segmentFirstArrivalUs < 0) {
            segmentFirstArrivalUs = arrivalUs;
        }
        lastArrivalUs = Math.max(lastArrivalUs, arrivalUs);
        long sensorTimeUs = envelope.hasEvents() ? envelope.getEvents().getTimeBaseUs()
                : envelope.hasSensorFrame() ? envelope.getSensorFrame().getExposureStartUs() : -1;
        if (sensorTimeUs >= 0) {
            pendingIndex.add(IndexEntry.newBuilder().setSensorTimeUs(sensorTimeUs).setOffset(offset)
                    .setArrivalUs(arrivalUs).build());
        }
        if (arrivalUs - lastIndexUs >= settings.indexIntervalUs()) {
            writeIndex();
            lastIndexUs = arrivalUs;
        }
        retire();
        flushIfDue(arrivalUs);
    }

    /** Flushes if {@code flushIntervalUs} has passed since the last flush; call it when idle too. */
    public void flushIfDue(long nowUs) throws IOException {
        if (nowUs - lastFlushUs >= settings.flushIntervalUs()) {
            flush();
            lastFlushUs = nowUs;
        }
    }

    /** Writes pending index entries and hands everything to the file system (and the device, with sync). */
    public void flush() throws IOException {
        writeIndex();
        segment.flush(settings.sync());
    }

    private void writeIndex() throws IOException {
        if (!pendingIndex.isEmpty()) {
            segment.append(RecordFormat.INDEX, RecordingIndex.newBuilder().addAllEntries(pendingIndex).build().toByteArray());
            pendingIndex.clear();
        }
    }

    private void rotate() throws IOException {
        writeIndex();
        segment.close();
        closed.addLast(new Closed(segment.path(), segment.size(), lastArrivalUs));
        closedBytes += segment.size();
        segmentNumber++;
        openSegment();
    }

    /** Deletes the oldest closed segments beyond the retention. */
    private void retire() throws IOException {
        while (!closed.isEmpty()) {
            Closed oldest = closed.peekFirst();
            // Deleting it must still leave the newest retainBytes: at least that much is kept, at most one segment more.
            boolean tooBig = closedBytes + segment.size() - oldest.bytes() >= settings.retainBytes();
            boolean tooOld = lastArrivalUs - oldest.lastArrivalUs() > settings.retainUs();
            if (!tooBig && !tooOld) {
                break;
            }
            closed.removeFirst();
            closedBytes -= oldest.bytes();
            Files.deleteIfExists(oldest.path());
            segmentsDeleted++;
        }
    }

    /**
     * Pins the recording as it is now: flushes (with a sync) and copies every segment still on disk
     * into {@code target} (created if missing), where the flight recorder will not delete them.
     * Returns the copies in order.
     */
    public List<Path> pin(Path target) throws IOException {
        writeIndex();
        segment.flush(true);
        Files.createDirectories(target);
        List<Path> copies = new ArrayList<>();
        for (Path p : segments()) {
            copies.add(Files.copy(p, target.resolve(p.getFileName()), StandardCopyOption.COPY_ATTRIBUTES));
        }
        return copies;
    }

    /** The segment files on disk, oldest first, the open one last. */
    public List<Path> segments() {
        List<Path> all = new ArrayList<>();
        for (Closed c : closed) {
            all.add(c.path());
        }
        all.add(segment.path());
        return all;
    }

    /** Bytes in all segments on disk, buffered ones included. */
    public long bytesOnDisk() {
        return closedBytes + segment.size();
    }

    /** Closed segments the retention deleted. */
    public long segmentsDeleted() {
        return segmentsDeleted;
    }

    /** Writes the pending index, flushes, syncs and closes the open segment. */
    @Override
    public void close() throws IOException {
        writeIndex();
        segment.close();
    }
}
