package dev.afterglow.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.Envelope;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Damaged segments: a file cut at every byte offset of its last records (a crash mid-write) and
 * single flipped bits. The reader must give back exactly the intact records before the damage,
 * never a damaged one, and say where it stopped.
 */
class RecordingDamageTest {
    @TempDir
    Path dir;
    private byte[] whole;
    private List<Long> offsets; // of every record after the header, and the file's end
    private List<Envelope> stored;

    @BeforeEach
    void writeOneSegment() throws IOException {
        List<Envelope> sent = SampleRecording.envelopes(31, 9); // ends with small event packets, not a frame
        RecordingWriter.Settings s = new RecordingWriter.Settings(1L << 30, 600_000_000L, Long.MAX_VALUE / 4,
                Long.MAX_VALUE / 4, false, Long.MAX_VALUE, Long.MAX_VALUE); // one index record, at the end
        SampleRecording.write(dir, "cut", sent, s).close();
        Path file = dir.resolve(RecordingWriter.segmentFileName("cut", 0));
        whole = Files.readAllBytes(file);
        offsets = new ArrayList<>();
        try (SegmentReader r = new SegmentReader(file)) {
            for (SegmentReader.Record rec; (rec = r.next()) != null; ) {
                offsets.add(rec.offset());
            }
            assertEquals(SegmentReader.Stop.END, r.stop());
        }
        offsets.add((long) whole.length);
        stored = new ArrayList<>(sent.stream().map(SampleRecording::stored).toList());
        assertEquals(stored.size() + 2, offsets.size(), "the envelopes, the index and the end");
    }

    @Test
    void shouldStopCleanlyAtATornRecordWhereverTheFileIsCut() throws IOException {
        int firstCut = offsets.get(offsets.size() - 4).intValue(); // every byte of the last three records
        for (int cut = firstCut; cut <= whole.length; cut++) {
            Path f = dir.resolve("cut-at.agrec");
            Files.write(f, java.util.Arrays.copyOf(whole, cut));
            List<Envelope> got = new ArrayList<>();
            try (RecordingReader r = RecordingReader.open(f)) {
                for (RecordingReader.Item i; (i = r.next()) != null; ) {
                    got.add(i.envelope());
                }
                int complete = 0; // records wholly before the cut
                while (complete + 1 < offsets.size() && offsets.get(complete + 1) <= cut) {
                    complete++;
                }
                assertEquals(stored.subList(0, Math.min(complete, stored.size())), got, "cut at " + cut);
                boolean onBoundary = offsets.contains((long) cut);
                assertEquals(onBoundary ? List.of() : List.of(f + ": torn record at byte " + offsets.get(complete)
                        + " (the file ends inside it); the records before it are intact"), r.problems(), "cut at " + cut);
            }
        }
    }

    @Test
    void shouldCatchEverySingleFlippedBitOfTheLastRecords() throws IOException {
        int from = offsets.get(offsets.size() - 3).intValue();
        int checked = 0;
        for (int pos = from; pos < whole.length; pos++) {
            int at = lastAtOrBefore(pos);
            boolean prefixOrCrc = pos < offsets.get(at) + RecordFormat.PREFIX || pos >= offsets.get(at + 1) - RecordFormat.SUFFIX;
            if (!prefixOrCrc && pos % 5 != 0) {
                continue; // every bit of every prefix and CRC byte; one payload byte in five
            }
            for (int bit = 0; bit < 8; bit++) {
                byte[] copy = whole.clone();
                copy[pos] ^= (byte) (1 << bit);
                Path f = dir.resolve("flip.agrec");
                Files.write(f, copy);
                int record = at;
                try (SegmentReader r = new SegmentReader(f)) {
                    int n = 0;
                    for (SegmentReader.Record rec; (rec = r.next()) != null; ) {
                        n++;
                    }
                    // the records before the damaged one come back (the header was read on opening), nothing after
                    assertEquals(record, n, "flip at byte " + pos + " bit " + bit);
                    assertNotEquals(SegmentReader.Stop.END, r.stop(), "flip at byte " + pos + " bit " + bit);
                    assertEquals(offsets.get(record), r.stopOffset());
                    if (pos >= offsets.get(record) + RecordFormat.PREFIX) {
                        assertEquals(SegmentReader.Stop.CRC_MISMATCH, r.stop(), "payload or CRC bit: caught by the CRC");
                    }
                }
                checked++;
            }
        }
        assertTrue(checked > 1000, "bits checked: " + checked);
    }

    private int lastAtOrBefore(int pos) {
        int k = 0;
        while (k + 1 < offsets.size() && offsets.get(k + 1) <= pos) {
            k++;
        }
        return k;
    }
}
