package dev.afterglow.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.Envelope;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.zip.CRC32C;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Writing and reading recordings: every envelope back as written, across segments, seeking, retention and pinning. */
class RecordingRoundTripTest {
    @TempDir
    Path dir;

    @Test
    void shouldUseTheCastagnoliCrcWithItsPublishedCheckValue() {
        // The CRC catalogue's check value for CRC-32C (also RFC 3720, appendix B.4): "123456789" -> 0xE3069283.
        CRC32C c = new CRC32C();
        c.update("123456789".getBytes(StandardCharsets.US_ASCII));
        assertEquals(0xE3069283L, c.getValue());
    }

    @Test
    void shouldReadBackEveryEnvelopeAndArrivalTimeAcrossRotatedSegmentsWithoutTheToken() throws IOException {
        List<Envelope> sent = SampleRecording.envelopes(400, 1);
        RecordingWriter.Settings s = RecordingWriter.Settings.keepAll().segments(64 * 1024, 600_000_000L);
        try (RecordingWriter w = SampleRecording.write(dir, "yard", sent, s)) {
            assertTrue(w.segments().size() >= 5, "rotated by size: " + w.segments().size());
        }
        String all = new String(readAll(dir), StandardCharsets.ISO_8859_1);
        assertFalse(all.contains("do-not-store-me"), "the sensor's token is in no file");
        try (RecordingReader r = RecordingReader.open(dir)) {
            assertEquals(SampleRecording.SENSOR, r.header().getHello().getSensorId());
            assertEquals("", r.header().getHello().getToken());
            assertEquals(1_764_000_000_000_000L, r.header().getRecordingStartUnixUs());
            for (int i = 0; i < sent.size(); i++) {
                RecordingReader.Item item = r.next();
                assertEquals(SampleRecording.stored(sent.get(i)), item.envelope(), "envelope " + i);
                assertEquals(SampleRecording.arrivalUs(i), item.arrivalUs());
            }
            assertEquals(null, r.next());
            assertEquals(List.of(), r.problems());
        }
    }

    @Test
    void shouldRotateByDurationAndNumberTheSegments() throws IOException {
        RecordingWriter.Settings s = RecordingWriter.Settings.keepAll().segments(1L << 30, 100_000);
        try (RecordingWriter w = SampleRecording.write(dir, "yard", SampleRecording.envelopes(100, 2), s)) {
            // 111 envelopes 4999 us apart span 550 ms: a new segment every 100 ms
            assertEquals(6, w.segments().size());
        }
        for (int k = 0; k < 6; k++) {
            try (SegmentReader r = new SegmentReader(dir.resolve(RecordingWriter.segmentFileName("yard", k)))) {
                assertEquals(k, r.header().getSegmentNumber());
                assertEquals(SampleRecording.SENSOR, r.header().getHello().getSensorId(), "every segment stands alone");
            }
        }
    }

    @Test
    void shouldSeekToTheIndexedRecordAtOrBeforeASensorTime() throws IOException {
        List<Envelope> sent = SampleRecording.envelopes(400, 3);
        RecordingWriter.Settings s = new RecordingWriter.Settings(64 * 1024, 600_000_000L, 50_000, 1_000_000, false,
                Long.MAX_VALUE, Long.MAX_VALUE);
        SampleRecording.write(dir, "yard", sent, s).close();
        try (RecordingReader r = RecordingReader.open(dir)) {
            long target = 1_000_000L + 5_000L * 250 + 1_234; // inside packet 250
            long at = r.seekToSensorTime(target);
            assertEquals(1_000_000L + 5_000L * 250, at, "every packet is indexed: the one holding the target");
            RecordingReader.Item first = r.next();
            assertTrue(first.envelope().hasEvents());
            assertEquals(250, first.envelope().getEvents().getSequence());
            assertEquals(-1, r.seekToSensorTime(5), "before the first packet: from the start");
            assertTrue(r.next().envelope().hasHello());
        }
    }

    @Test
    void shouldIgnoreIndexEntriesThatPointOutsideTheFile() throws IOException {
        SampleRecording.write(dir, "yard", SampleRecording.envelopes(20, 5), RecordingWriter.Settings.keepAll()).close();
        Path file = dir.resolve(RecordingWriter.segmentFileName("yard", 0));
        long size = Files.size(file);
        // A well-formed index record (its CRC matches) whose offsets point before the first record and past the end.
        byte[] payload = dev.afterglow.proto.v1.RecordingIndex.newBuilder()
                .addEntries(dev.afterglow.proto.v1.IndexEntry.newBuilder().setSensorTimeUs(1).setOffset(3))
                .addEntries(dev.afterglow.proto.v1.IndexEntry.newBuilder().setSensorTimeUs(2).setOffset(size + 1_000_000))
                .addEntries(dev.afterglow.proto.v1.IndexEntry.newBuilder().setSensorTimeUs(3).setOffset(Long.MAX_VALUE))
                .build().toByteArray();
        byte[] prefix = new byte[RecordFormat.PREFIX];
        int crc = RecordFormat.prefixAndCrc(RecordFormat.INDEX, payload, payload.length, prefix);
        java.nio.ByteBuffer crcBytes = java.nio.ByteBuffer.allocate(4).order(java.nio.ByteOrder.LITTLE_ENDIAN).putInt(crc);
        Files.write(file, prefix, java.nio.file.StandardOpenOption.APPEND);
        Files.write(file, payload, java.nio.file.StandardOpenOption.APPEND);
        Files.write(file, crcBytes.array(), java.nio.file.StandardOpenOption.APPEND);
        long grown = Files.size(file);
        try (SegmentReader s = new SegmentReader(file)) {
            assertTrue(s.readIndex().stream().allMatch(e -> e.getOffset() >= 8 && e.getOffset() < grown),
                    "only entries inside the file");
        }
        try (RecordingReader r = RecordingReader.open(file)) {
            r.seekToSensorTime(4); // the hostile entries would be the best match; without them: the true ones
            assertTrue(r.next() != null, "reading goes on");
            assertEquals(List.of(), r.problems());
        }
    }

    @Test
    void shouldKeepOnlyTheRetainedSegmentsAndPinACopy() throws IOException {
        Path live = dir.resolve("ring");
        RecordingWriter.Settings s = RecordingWriter.Settings.keepAll().segments(32 * 1024, 600_000_000L)
                .retaining(200 * 1024, Long.MAX_VALUE);
        List<Envelope> sent = SampleRecording.envelopes(2_000, 4);
        try (RecordingWriter w = SampleRecording.write(live, "yard", sent, s)) {
            assertTrue(w.segmentsDeleted() > 10, "old segments retired: " + w.segmentsDeleted());
            assertTrue(w.bytesOnDisk() >= 200 * 1024 && w.bytesOnDisk() <= (200 + 32 + 8) * 1024,
                    "the newest 200 KiB kept, at most one segment (and its last record) more: " + w.bytesOnDisk());
            assertEquals(w.segments().size(), fileCount(live));
            List<Path> pinned = w.pin(dir.resolve("pinned"));
            assertEquals(w.segments().size(), pinned.size());
        }
        try (RecordingReader r = RecordingReader.open(dir.resolve("pinned"))) {
            List<Envelope> got = new ArrayList<>();
            for (RecordingReader.Item i; (i = r.next()) != null; ) {
                got.add(i.envelope());
            }
            assertEquals(List.of(), r.problems());
            assertEquals(sent.subList(sent.size() - got.size(), sent.size()), got, "the newest envelopes, in order");
            assertTrue(got.size() > 100);
        }
    }

    @Test
    void shouldRefuseFilesThatAreNoSegmentsWithTheFileNamed() throws IOException {
        Path text = Files.writeString(dir.resolve("notes.agrec"), "hello, world");
        RecordingFormatException e = assertThrows(RecordingFormatException.class, () -> new SegmentReader(text));
        assertTrue(e.getMessage().contains("notes.agrec") && e.getMessage().contains("signature"), e.getMessage());
        Path empty = Files.createDirectories(dir.resolve("empty"));
        RecordingFormatException none = assertThrows(RecordingFormatException.class, () -> RecordingReader.open(empty));
        assertTrue(none.getMessage().contains("no .agrec segment"), none.getMessage());
        assertThrows(IllegalArgumentException.class,
                () -> RecordingWriter.create(dir, "../escape", SampleRecording.hello(), "t", 0, RecordingWriter.Settings.keepAll()));
    }

    private static long fileCount(Path folder) throws IOException {
        try (var s = Files.list(folder)) {
            return s.count();
        }
    }

    private static byte[] readAll(Path folder) throws IOException {
        java.io.ByteArrayOutputStream all = new java.io.ByteArrayOutputStream();
        try (var s = Files.list(folder)) {
            for (Path p : s.sorted().toList()) {
                all.write(Files.readAllBytes(p));
            }
        }
        return all.toByteArray();
    }
}
