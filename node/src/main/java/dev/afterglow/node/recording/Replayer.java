package dev.afterglow.node.recording;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorFrame;
import dev.afterglow.recording.RecordingReader;
import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.locks.LockSupport;

/**
 * Sends a recording's event packets and sensor frames, one envelope per recorded envelope (packet
 * boundaries kept), at the recorded pace, {@code speed} times faster, or as fast as the receiver
 * takes them ({@code speed} 0). Gaps between arrivals are kept (scaled by the speed). With
 * {@code passes} above 1 the recording plays again and again, each pass shifted forward in sensor
 * time by the recording's span and in sequence numbers by its packet count, so the receiver sees
 * one continuous sensor, not a clock that jumps back. Hellos in the recording are not sent: the
 * caller connected with the header's hello.
 */
public final class Replayer {

    /** Where envelopes go. */
    public interface Target {
        void send(Envelope envelope) throws IOException;

        /** Sends an envelope as recorded, already serialized (no re-encoding); by default parsed and sent. */
        default void sendSerialized(com.google.protobuf.ByteString envelope) throws IOException {
            send(Envelope.parseFrom(envelope));
        }

        /** Called after each paced send and at the end: push out what is buffered. */
        void flush() throws IOException;

        /** A TCP sensor connection as the target. */
        static Target of(dev.afterglow.node.client.SensorClient client) {
            return new Target() {
                @Override
                public void send(Envelope envelope) throws IOException {
                    client.send(envelope);
                }

                @Override
                public void sendSerialized(com.google.protobuf.ByteString envelope) throws IOException {
                    client.sendSerialized(envelope);
                }

                @Override
                public void flush() throws IOException {
                    client.flush();
                }
            };
        }
    }

    /** What a replay sent, and any damage found in the recording. */
    public record Result(long envelopes, long events, long frames, double seconds, List<String> problems) {
    }

    private final Path recording;
    private final double speed;
    private final long fromSensorUs;
    private final int passes;

    /**
     * @param speed recorded seconds per wall second, or 0 for as fast as possible
     * @param fromSensorUs start at the first packet or frame at or after this sensor time (0: from the start)
     * @param passes times to play, 1 .. 1 000 000
     */
    public Replayer(Path recording, double speed, long fromSensorUs, int passes) {
        if (!(speed >= 0) || speed > 1000) {
            throw new IllegalArgumentException("--speed " + speed + " outside 0 .. 1000 (0: as fast as possible)");
        }
        if (passes < 1 || passes > 1_000_000) {
            throw new IllegalArgumentException("--passes " + passes + " outside 1 .. 1000000");
        }
        this.recording = recording;
        this.speed = speed;
        this.fromSensorUs = fromSensorUs;
        this.passes = passes;
    }

    /** Plays the recording into {@code target}. */
    public Result run(Target target) throws IOException {
        long started = System.nanoTime();
        long envelopes = 0;
        long events = 0;
        long frames = 0;
        long timeShiftUs = 0;
        long sequenceShift = 0;
        long wallOffsetNanos = 0; // wall time already spent on earlier passes
        List<String> problems = List.of();
        for (int pass = 0; pass < passes; pass++) {
            long firstSensorUs = Long.MAX_VALUE;
            long lastSensorUs = Long.MIN_VALUE;
            long maxSequence = -1;
            long firstArrivalUs = -1;
            long lastArrivalUs = 0;
            try (RecordingReader r = RecordingReader.open(recording)) {
                if (fromSensorUs > 0) {
                    r.seekToSensorTime(fromSensorUs);
                }
                for (RecordingReader.Item item; (item = r.next()) != null; ) {
                    Envelope e = item.envelope();
                    long sensorUs = e.hasEvents() ? e.getEvents().getTimeBaseUs()
                            : e.hasSensorFrame() ? e.getSensorFrame().getExposureStartUs() : -1;
                    if (sensorUs < 0 || sensorUs < fromSensorUs) {
                        continue; // hellos, and what lies before the start
                    }
                    if (firstArrivalUs < 0) {
                        firstArrivalUs = item.arrivalUs();
                    }
                    lastArrivalUs = item.arrivalUs();
                    if (speed > 0) {
                        long due = started + wallOffsetNanos + (long) ((item.arrivalUs() - firstArrivalUs) * 1000 / speed);
                        for (long wait; (wait = due - System.nanoTime()) > 0; ) {
                            LockSupport.parkNanos(wait);
                        }
                    }
                    if (e.hasEvents()) {
                        EventPacket p = e.getEvents();
                        long end = passes > 1 ? p.getTimeBaseUs() + lastDt(p) : p.getTimeBaseUs(); // the span matters only for a next pass
                        firstSensorUs = Math.min(firstSensorUs, p.getTimeBaseUs());
                        lastSensorUs = Math.max(lastSensorUs, end);
                        maxSequence = Math.max(maxSequence, p.getSequence());
                        if (pass > 0) {
                            e = e.toBuilder().setEvents(p.toBuilder().setTimeBaseUs(p.getTimeBaseUs() + timeShiftUs)
                                    .setSequence(p.getSequence() + sequenceShift)).build();
                        }
                        events += p.getEventCount();
                    } else {
                        SensorFrame f = e.getSensorFrame();
                        firstSensorUs = Math.min(firstSensorUs, f.getExposureStartUs());
                        lastSensorUs = Math.max(lastSensorUs, f.getExposureEndUs());
                        if (pass > 0) {
                            e = e.toBuilder().setSensorFrame(f.toBuilder().setExposureStartUs(f.getExposureStartUs() + timeShiftUs)
                                    .setExposureEndUs(f.getExposureEndUs() + timeShiftUs)).build();
                        }
                        frames++;
                    }
                    if (pass == 0) {
                        target.sendSerialized(item.bytes()); // as recorded, byte for byte
                    } else {
                        target.send(e);
                    }
                    envelopes++;
                    if (speed > 0) {
                        target.flush();
                    }
                }
                problems = r.problems();
            }
            if (firstSensorUs == Long.MAX_VALUE) {
                break; // nothing to play
            }
            timeShiftUs += lastSensorUs - firstSensorUs + 1_000; // the next pass starts 1 ms after this one ended
            sequenceShift += maxSequence + 1;
            if (speed > 0) {
                wallOffsetNanos += (long) ((lastArrivalUs - firstArrivalUs + 1_000) * 1000 / speed);
            }
        }
        target.flush();
        return new Result(envelopes, events, frames, (System.nanoTime() - started) * 1e-9, problems);
    }

    /** The largest dt of a packet's records (0 for an empty packet). */
    private static long lastDt(EventPacket p) {
        java.nio.ByteBuffer b = p.getEvents().asReadOnlyByteBuffer().order(java.nio.ByteOrder.LITTLE_ENDIAN);
        int n = b.remaining() / 8;
        long max = 0;
        for (int i = 0; i < n; i++) {
            max = Math.max(max, b.getInt(8 * i) & 0xFFFFFFFFL);
        }
        return max;
    }
}
