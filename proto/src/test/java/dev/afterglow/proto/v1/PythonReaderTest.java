package dev.afterglow.proto.v1;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.fail;

import com.google.protobuf.ByteString;
import java.io.IOException;
import java.io.OutputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Python users read our bytes with their own tools: numpy (one {@code frombuffer} call with the
 * dtype documented in afterglow.proto) and Python classes that Debian's {@code protoc} generates
 * from the same .proto. The script is src/test/python/read_events.py.
 *
 * <p>Needs /usr/bin/python3 with python3-numpy (and, for the envelope test, /usr/bin/protoc and
 * python3-protobuf); .ci/run installs them. Where they are missing the tests fail under CI=true
 * and are skipped elsewhere.
 */
class PythonReaderTest {
    private static final Path PYTHON = PythonTools.PYTHON;
    private static final Path PROTOC = PythonTools.PROTOC;
    private static final long TIMEOUT_S = 60;

    @TempDir
    Path tmp;

    /**
     * Time bases below and above 2^32 us. With dt up to 2^32 - 1 both need 64-bit sums: numpy's
     * {@code time_base + uint32 array} stays uint32 for a small base and wraps (numpy 1.24 and 2.x),
     * and raises OverflowError for a large one under numpy 2 (NEP 50), so the script must widen dt.
     */
    @ParameterizedTest(name = "time base {0} us")
    @ValueSource(longs = {5L, 5_000_000_123L})
    void shouldDecodeEventBytesWithOneNumpyFrombufferCall(long timeBaseUs) throws Exception {
        PythonTools.requireTool(Files.isExecutable(PYTHON), PYTHON + " is missing (Debian package python3)");
        PythonTools.requireTool(PythonTools.imports("numpy"), PYTHON + " cannot import numpy (Debian package python3-numpy)");

        Events sent = seededEvents(new SplittableRandom(77), 2_000);
        Path events = tmp.resolve("events.bin");
        Files.write(events, DiagramEventLayout.write(sent.dt, sent.x, sent.y, sent.p));
        Path out = tmp.resolve("events.txt");

        runPython("events", events.toString(), Long.toString(timeBaseUs), out.toString());

        assertSameLines(sent.lines(timeBaseUs), Files.readAllLines(out, StandardCharsets.UTF_8));
    }

    @Test
    void shouldParseDelimitedEnvelopesWithProtocGeneratedPython() throws Exception {
        PythonTools.requireTool(Files.isExecutable(PYTHON), PYTHON + " is missing (Debian package python3)");
        PythonTools.requireTool(PythonTools.imports("numpy"), PYTHON + " cannot import numpy (Debian package python3-numpy)");
        PythonTools.requireTool(Files.isExecutable(PROTOC), PROTOC + " is missing (Debian package protobuf-compiler)");
        PythonTools.requireTool(PythonTools.imports("google.protobuf"),
                PYTHON + " cannot import google.protobuf (Debian package python3-protobuf)");

        Path generated = Files.createDirectories(tmp.resolve("generated"));
        Path protoRoot = moduleDir().resolve("src/main/proto");
        PythonTools.run(List.of(PROTOC.toString(), "-I" + protoRoot, "--python_out=" + generated, "afterglow/v1/afterglow.proto"),
                tmp.resolve("protoc.out"), tmp.resolve("protoc.err"), java.util.Map.of());

        long timeBaseUs = 7_000_000_000_000L;
        Events sent = seededEvents(new SplittableRandom(78), 300);
        Envelope packet = Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setEvents(EventPacket.newBuilder()
                        .setSequence(9)
                        .setTimeBaseUs(timeBaseUs)
                        .setEventCount(sent.dt.length)
                        .setEvents(ByteString.copyFrom(DiagramEventLayout.write(sent.dt, sent.x, sent.y, sent.p)))
                        .setSensorId("bench-left"))
                .build();
        List<Envelope> stream = new ArrayList<>(SampleEnvelopes.all());
        stream.add(packet); // over 2 kB: its length prefix takes two bytes
        Path streamFile = tmp.resolve("stream.bin");
        try (OutputStream os = Files.newOutputStream(streamFile)) {
            for (Envelope e : stream) {
                e.writeDelimitedTo(os);
            }
        }
        Path out = tmp.resolve("envelopes.txt");

        runPython("envelopes", streamFile.toString(), generated.toString(), out.toString());

        List<String> expected = new ArrayList<>();
        for (int i = 0; i < stream.size(); i++) {
            expected.add(describe(i, stream.get(i)));
        }
        expected.add("events of 1");
        EventPacket sample = SampleEnvelopes.events().getEvents();
        DiagramEventLayout.Events sampleEvents = DiagramEventLayout.read(sample.getEvents().toByteArray());
        expected.addAll(new Events(sampleEvents.dt(), sampleEvents.x(), sampleEvents.y(), sampleEvents.p())
                .lines(sample.getTimeBaseUs()));
        expected.add("events of 6");
        expected.addAll(sent.lines(timeBaseUs));
        assertSameLines(expected, Files.readAllLines(out, StandardCharsets.UTF_8));
    }

    /** Compares line by line so a mismatch names the first differing line, not thousands of them. */
    private static void assertSameLines(List<String> expected, List<String> actual) {
        for (int i = 0; i < Math.min(expected.size(), actual.size()); i++) {
            assertEquals(expected.get(i), actual.get(i), "line " + (i + 1));
        }
        assertEquals(expected.size(), actual.size(), "number of lines");
    }

    /** The line read_events.py writes for an envelope, built here from the Java message. */
    private static String describe(int index, Envelope e) {
        String head = index + " " + bodyName(e) + " v" + e.getSchemaVersion();
        switch (e.getBodyCase()) {
            case HELLO: {
                SensorHello h = e.getHello();
                return head + " sensor_id=" + h.getSensorId() + " width=" + h.getWidth() + " height=" + h.getHeight()
                        + " tick_ns=" + h.getClock().getTickNs() + " epoch_us=" + h.getClock().getEpochUs()
                        + " sends_frames=" + (h.getSendsFrames() ? "True" : "False");
            }
            case EVENTS: {
                EventPacket p = e.getEvents();
                return head + " sequence=" + p.getSequence() + " time_base_us=" + p.getTimeBaseUs()
                        + " event_count=" + p.getEventCount() + " bytes=" + p.getEvents().size()
                        + " sensor_id=" + p.getSensorId();
            }
            case SENSOR_FRAME: {
                SensorFrame f = e.getSensorFrame();
                return head + " sequence=" + f.getSequence() + " exposure_end_us=" + f.getExposureEndUs()
                        + " bit_depth=" + f.getBitDepth() + " pixels=" + f.getPixels().size();
            }
            case INTENSITY_FRAME: {
                IntensityFrame f = e.getIntensityFrame();
                Provenance pv = f.getProvenance();
                List<String> stages = new ArrayList<>();
                for (StageCount s : pv.getStagesList()) {
                    stages.add(s.getStage() + ":" + s.getEventsRemoved() + "/" + s.getEventsIn());
                }
                return head + " sequence=" + f.getSequence() + " frame_time_us=" + f.getFrameTimeUs()
                        + " format=" + f.getFormatValue() + " region=" + region(f.getRegion())
                        + " downscale=" + f.getDownscale() + " events_applied=" + pv.getEventsApplied()
                        + " events_dropped=" + pv.getEventsDropped()
                        + " publish_host_time_ns=" + pv.getPublishHostTimeNs() + " stages=" + String.join(",", stages);
            }
            case SUBSCRIBE: {
                Subscribe s = e.getSubscribe();
                return head + " sensor_id=" + s.getSensorId() + " rate_hz=" + s.getRateHz()
                        + " format=" + s.getFormatValue() + " region=" + region(s.getRegion())
                        + " downscale=" + s.getDownscale();
            }
            case ERROR:
                return head + " code=" + e.getError().getCode();
            default:
                return head;
        }
    }

    private static String bodyName(Envelope e) {
        return switch (e.getBodyCase()) {
            case HELLO -> "hello";
            case EVENTS -> "events";
            case SENSOR_FRAME -> "sensor_frame";
            case INTENSITY_FRAME -> "intensity_frame";
            case SUBSCRIBE -> "subscribe";
            case SEALED -> "sealed";
            case ERROR -> "error";
            case BODY_NOT_SET -> "None";
        };
    }

    private static String region(Region r) {
        return r.getX() + "," + r.getY() + "," + r.getWidth() + "," + r.getHeight();
    }

    /** Events as the Java side wrote them; dt in microseconds after the packet's time base. */
    private record Events(long[] dt, int[] x, int[] y, int[] p) {
        List<String> lines(long timeBaseUs) {
            List<String> lines = new ArrayList<>(dt.length);
            for (int i = 0; i < dt.length; i++) {
                lines.add((timeBaseUs + dt[i]) + " " + x[i] + " " + y[i] + " " + p[i]);
            }
            return lines;
        }
    }

    /** Seeded events covering the full range of every field, the extremes included. */
    private static Events seededEvents(SplittableRandom random, int n) {
        long[] dt = new long[n];
        int[] x = new int[n];
        int[] y = new int[n];
        int[] p = new int[n];
        for (int i = 2; i < n; i++) {
            dt[i] = random.nextLong(1L << 32);
            x[i] = random.nextInt(1 << 16);
            y[i] = random.nextInt(1 << 15);
            p[i] = random.nextInt(2);
        }
        dt[1] = 0xFFFF_FFFFL;
        x[1] = 0xFFFF;
        y[1] = 0x7FFF;
        p[1] = 1;
        return new Events(dt, x, y, p);
    }

    private void runPython(String... args) throws IOException, InterruptedException {
        List<String> command = new ArrayList<>(List.of(PYTHON.toString(), "-I",
                moduleDir().resolve("src/test/python/read_events.py").toString()));
        command.addAll(List.of(args));
        PythonTools.run(command, tmp.resolve("python.out"), tmp.resolve("python.err"), java.util.Map.of());
    }

    /** The proto module's directory: Surefire sets basedir; a plain run starts there. */
    private static Path moduleDir() {
        return Path.of(System.getProperty("basedir", System.getProperty("user.dir")));
    }
}
