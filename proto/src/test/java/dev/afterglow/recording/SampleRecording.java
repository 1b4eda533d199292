package dev.afterglow.recording;

import com.google.protobuf.ByteString;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorFrame;
import dev.afterglow.proto.v1.SensorHello;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

/** A seeded stream of envelopes (hello, event packets, a sensor frame every tenth) and its recording, for the format's tests. */
final class SampleRecording {
    static final String SENSOR = "yard-7";

    private SampleRecording() {
    }

    static SensorHello hello() {
        return SensorHello.newBuilder().setSensorId(SENSOR).setWidth(64).setHeight(48).setSendsFrames(true)
                .setContrastThreshold(0.2f).setToken("do-not-store-me").build();
    }

    /** Envelopes in arrival order; arrival i is at {@link #arrivalUs}(i). */
    static List<Envelope> envelopes(int packets, long seed) {
        SplittableRandom r = new SplittableRandom(seed);
        List<Envelope> out = new ArrayList<>();
        out.add(Envelope.newBuilder().setSchemaVersion(1).setHello(hello()).build());
        for (int k = 0; k < packets; k++) {
            int n = 1 + r.nextInt(300);
            byte[] ev = new byte[8 * n];
            r.nextBytes(ev);
            out.add(Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                    .setSequence(k).setTimeBaseUs(1_000_000L + 5_000L * k).setEventCount(n)
                    .setEvents(ByteString.copyFrom(ev))).build());
            if (k % 10 == 9) {
                byte[] px = new byte[64 * 48];
                r.nextBytes(px);
                out.add(Envelope.newBuilder().setSchemaVersion(1).setSensorFrame(SensorFrame.newBuilder()
                        .setSequence(k / 10).setExposureStartUs(1_000_000L + 5_000L * k - 10_000)
                        .setExposureEndUs(1_000_000L + 5_000L * k).setWidth(64).setHeight(48).setBitDepth(8)
                        .setPixels(ByteString.copyFrom(px))).build());
            }
        }
        return out;
    }

    static long arrivalUs(int i) {
        return 250L + 4_999L * i;
    }

    /** Writes {@code envelopes} as recording {@code name} in {@code folder}. */
    static RecordingWriter write(Path folder, String name, List<Envelope> envelopes, RecordingWriter.Settings s)
            throws IOException {
        RecordingWriter w = RecordingWriter.create(folder, name, hello(), "afterglow test", 1_764_000_000_000_000L, s);
        for (int i = 0; i < envelopes.size(); i++) {
            w.write(arrivalUs(i), envelopes.get(i));
        }
        return w;
    }

    /** The envelope as the recording must keep it: a hello without its token. */
    static Envelope stored(Envelope e) {
        return e.hasHello() ? e.toBuilder().setHello(e.getHello().toBuilder().clearToken()).build() : e;
    }
}
