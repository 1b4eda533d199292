package dev.afterglow.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.PythonTools;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorFrame;
import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The Java and the Python readers against each other ({@code examples/python/afterglow_recording.py},
 * with Debian's python3-protobuf, python3-numpy and python3-crcmod, whose CRC-32C is an independent
 * implementation of the checksum): Python reads what Java wrote, Java reads what Python wrote, and
 * both describe every envelope the same way.
 */
class PythonRecordingTest {
    private static final Path PYTHON = PythonTools.PYTHON;
    private static final Path PROTOC = PythonTools.PROTOC;
    @TempDir
    Path tmp;
    private Path generated;

    @BeforeEach
    void generatePythonClasses() throws Exception {
        PythonTools.requireTool(Files.isExecutable(PYTHON), PYTHON + " is missing (Debian package python3)");
        PythonTools.requireTool(Files.isExecutable(PROTOC), PROTOC + " is missing (Debian package protobuf-compiler)");
        for (String module : List.of("numpy", "google.protobuf", "crcmod.predefined")) {
            PythonTools.requireTool(PythonTools.imports(module), PYTHON + " cannot import " + module
                    + " (Debian packages python3-numpy, python3-protobuf, python3-crcmod)");
        }
        generated = Files.createDirectories(tmp.resolve("generated"));
        Path protoRoot = repo().resolve("proto/src/main/proto");
        run(List.of(PROTOC.toString(), "-I" + protoRoot, "--python_out=" + generated,
                "afterglow/v1/afterglow.proto", "afterglow/v1/recording.proto"));
    }

    @Test
    void shouldReadWithPythonWhatJavaWroteAcrossSegments() throws Exception {
        Path folder = tmp.resolve("java-wrote");
        List<Envelope> sent = SampleRecording.envelopes(300, 12);
        try (RecordingWriter w = SampleRecording.write(folder, "yard", sent,
                RecordingWriter.Settings.keepAll().segments(48 * 1024, 600_000_000L))) {
            assertTrue(w.segments().size() >= 3, "several segments: " + w.segments().size());
        }
        List<String> expected = new ArrayList<>();
        for (int i = 0; i < sent.size(); i++) {
            expected.add(describe(SampleRecording.arrivalUs(i), SampleRecording.stored(sent.get(i))));
        }
        Path out = tmp.resolve("python.txt");
        run(List.of(PYTHON.toString(), script().toString(), "dump", folder.toString(), out.toString()));
        assertEquals(expected, Files.readAllLines(out, StandardCharsets.UTF_8));
        assertEquals("", Files.readString(tmp.resolve("stderr.txt")), "no problems reported");
    }

    @Test
    void shouldReadWithJavaWhatPythonWrote() throws Exception {
        Path file = tmp.resolve("py.agrec");
        run(List.of(PYTHON.toString(), script().toString(), "write-sample", file.toString()));
        Path out = tmp.resolve("python.txt");
        run(List.of(PYTHON.toString(), script().toString(), "dump", file.toString(), out.toString()));
        List<String> pythonSays = Files.readAllLines(out, StandardCharsets.UTF_8);
        List<String> javaSays = new ArrayList<>();
        try (RecordingReader r = RecordingReader.open(file)) {
            assertEquals("py-cam", r.header().getHello().getSensorId());
            assertEquals("afterglow_recording.py", r.header().getWriter());
            for (RecordingReader.Item i; (i = r.next()) != null; ) {
                javaSays.add(describe(i.arrivalUs(), i.envelope()));
            }
            assertEquals(List.of(), r.problems());
        }
        assertEquals(45, javaSays.size(), "a hello, 40 packets, 4 frames");
        assertEquals(pythonSays, javaSays);
        assertFalse(new String(Files.readAllBytes(file), StandardCharsets.ISO_8859_1).contains("secret"), "no token written");
    }

    @Test
    void shouldReportInPythonTheRecordJavaFindsCorrupt() throws Exception {
        Path folder = tmp.resolve("flipped");
        SampleRecording.write(folder, "yard", SampleRecording.envelopes(20, 13), RecordingWriter.Settings.keepAll()).close();
        Path file = folder.resolve(RecordingWriter.segmentFileName("yard", 0));
        byte[] bytes = Files.readAllBytes(file);
        bytes[bytes.length / 2] ^= 0x10;
        Files.write(file, bytes);
        String javaStop;
        try (SegmentReader r = new SegmentReader(file)) {
            while (r.next() != null) {
                // read to the damage
            }
            assertEquals(SegmentReader.Stop.CRC_MISMATCH, r.stop());
            javaStop = "CRC-32C mismatch in the record at byte " + r.stopOffset();
        }
        run(List.of(PYTHON.toString(), script().toString(), "dump", file.toString(), tmp.resolve("o.txt").toString()));
        String pythonStop = Files.readString(tmp.resolve("stderr.txt"));
        assertTrue(pythonStop.contains(javaStop), "Python: " + pythonStop + " / Java: " + javaStop);
    }

    /** The line afterglow_recording.py's describe() writes for one envelope. */
    static String describe(long arrivalUs, Envelope e) {
        if (e.hasEvents()) {
            EventPacket p = e.getEvents();
            ByteBuffer b = p.getEvents().asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN);
            int n = b.remaining() / 8;
            long sum = 0;
            long firstT = -1;
            for (int i = 0; i < n; i++) {
                long t = p.getTimeBaseUs() + (b.getInt(8 * i) & 0xFFFFFFFFL);
                int x = b.getShort(8 * i + 4) & 0xFFFF;
                int yp = b.getShort(8 * i + 6) & 0xFFFF;
                sum += t * 3 + x * 5L + (yp & 0x7FFF) * 7L + (yp >>> 15); // wraps as numpy's uint64 does
                firstT = i == 0 ? t : firstT;
            }
            return arrivalUs + " events seq=" + p.getSequence() + " base=" + p.getTimeBaseUs() + " n=" + n
                    + " first_t=" + firstT + " sum=" + Long.toUnsignedString(sum);
        }
        if (e.hasSensorFrame()) {
            SensorFrame f = e.getSensorFrame();
            long sum = 0;
            for (byte v : f.getPixels().toByteArray()) {
                sum += v & 0xFF;
            }
            return arrivalUs + " frame seq=" + f.getSequence() + " start=" + f.getExposureStartUs() + " " + f.getWidth()
                    + "x" + f.getHeight() + " pixels_sum=" + sum;
        }
        if (e.hasHello()) {
            return arrivalUs + " hello " + e.getHello().getSensorId() + " " + e.getHello().getWidth() + "x"
                    + e.getHello().getHeight() + " token=" + (e.getHello().getToken().isEmpty() ? "no" : "yes");
        }
        return arrivalUs + " " + e.getBodyCase().name().toLowerCase();
    }

    private void run(List<String> command) throws IOException, InterruptedException {
        PythonTools.run(command, tmp.resolve("stdout.txt"), tmp.resolve("stderr.txt"),
                java.util.Map.of("PYTHONNOUSERSITE", "1", "PYTHONPATH", generated == null ? "" : generated.toString()));
    }

    private static Path script() {
        return repo().resolve("examples/python/afterglow_recording.py");
    }

    /** The repository root: the proto module's parent (Surefire sets basedir to the module). */
    private static Path repo() {
        return Path.of(System.getProperty("basedir", System.getProperty("user.dir"))).toAbsolutePath().getParent();
    }
}
