package dev.afterglow.node.demo;

import com.google.protobuf.ByteString;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SensorConfig;
import dev.afterglow.filters.synth.SyntheticSensor;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.proto.v1.SensorFrame;
import java.io.IOException;

/**
 * Plays a synthetic sensor into a node as a real sensor would: one packet per {@code packetUs}
 * of sensor time, paced to the wall clock (sensor time = time since start x speed), plus the
 * sensor's own 8-bit frames over TCP. Runs on the calling thread until the duration ends or the
 * thread is interrupted.
 */
public final class SyntheticFeed {
    private final SyntheticSensor sensor;

    /**
     * A feed of {@code scene} at the given size under the scene's sensor conditions
     * ({@link SceneKind#sensor}), with the background activity {@code noiseHz} if given (null: the
     * scene's).
     */
    public SyntheticFeed(SceneKind scene, int width, int height, Double noiseHz, long seed) {
        this(scene, withNoise(scene.sensor(width, height), noiseHz).seed(seed).build());
    }

    /** A feed of {@code scene} seen by a sensor with {@code config} (its size and seed build the scene). */
    public SyntheticFeed(SceneKind scene, SensorConfig config) {
        this.sensor = new SyntheticSensor(scene.create(config.width(), config.height(), config.seed()), config);
    }

    private static SensorConfig.Builder withNoise(SensorConfig.Builder b, Double noiseHz) {
        return noiseHz == null ? b : b.backgroundRateHz(noiseHz);
    }

    /** The simulated sensor (for its counts and ground truth). */
    public SyntheticSensor sensor() {
        return sensor;
    }

    /** Where packets go. */
    public interface Sink {
        void events(EventBatch batch) throws IOException;

        void frame(SensorFrame frame) throws IOException;

        void flush() throws IOException;
    }

    /** A sink writing to a TCP sensor connection. */
    public static Sink tcp(SensorClient client) {
        return new Sink() {
            @Override
            public void events(EventBatch batch) throws IOException {
                client.sendEvents(batch);
            }

            @Override
            public void frame(SensorFrame frame) throws IOException {
                client.sendFrame(frame);
            }

            @Override
            public void flush() throws IOException {
                client.flush();
            }
        };
    }

    /** A sink sending datagrams; sensor frames are not sent over UDP. */
    public static Sink udp(UdpSensorClient client) {
        return new Sink() {
            @Override
            public void events(EventBatch batch) throws IOException {
                client.sendEvents(batch);
            }

            @Override
            public void frame(SensorFrame frame) {
            }

            @Override
            public void flush() {
            }
        };
    }

    /**
     * A sink writing a recording, as if a node had received the packets: each arrives at the sensor
     * time it ends (microseconds from the first packet), numbered from 0.
     */
    public static Sink recording(dev.afterglow.recording.RecordingWriter writer, String sensorId) {
        return new Sink() {
            private long sequence;
            private long firstUs = -1;

            @Override
            public void events(EventBatch batch) throws IOException {
                long end = batch.timeBaseUs + batch.maxT;
                if (firstUs < 0) {
                    firstUs = batch.timeBaseUs;
                }
                writer.write(end - firstUs, dev.afterglow.proto.v1.Envelope.newBuilder().setSchemaVersion(1)
                        .setEvents(SensorClient.packet(sensorId, sequence++, batch)).build());
            }

            @Override
            public void frame(SensorFrame frame) throws IOException {
                writer.write(Math.max(0, frame.getExposureEndUs() - Math.max(0, firstUs)),
                        dev.afterglow.proto.v1.Envelope.newBuilder().setSchemaVersion(1).setSensorFrame(frame).build());
            }

            @Override
            public void flush() {
            }
        };
    }

    /** Both sinks, {@code a} first. */
    public static Sink both(Sink a, Sink b) {
        return new Sink() {
            @Override
            public void events(EventBatch batch) throws IOException {
                a.events(batch);
                b.events(batch);
            }

            @Override
            public void frame(SensorFrame frame) throws IOException {
                a.frame(frame);
                b.frame(frame);
            }

            @Override
            public void flush() throws IOException {
                a.flush();
                b.flush();
            }
        };
    }

    /**
     * Streams {@code seconds} of sensor time (0: until interrupted).
     *
     * @param speed sensor seconds per wall second (1: real time); 0: as fast as possible
     * @return events sent
     */
    public long run(Sink sink, String sensorId, double seconds, long packetUs, double speed, boolean sendFrames)
            throws IOException, InterruptedException {
        EventBatch batch = new EventBatch(1 << 18);
        long endUs = seconds > 0 ? Math.round(seconds * 1e6) : Long.MAX_VALUE;
        long start = System.nanoTime();
        long sent = 0;
        for (long t = sensor.timeUs(); t < endUs; ) {
            if (Thread.currentThread().isInterrupted()) {
                throw new InterruptedException();
            }
            long to = Math.min(endUs, t + packetUs);
            batch.reset(t);
            sensor.step(to, batch); // stops early if the batch fills; the next packet continues
            if (speed > 0) {
                long wait = start + (long) (sensor.timeUs() * 1000 / speed) - System.nanoTime();
                if (wait > 0) {
                    Thread.sleep(wait / 1_000_000, (int) (wait % 1_000_000));
                }
            }
            if (batch.size > 0) {
                sink.events(batch);
                sent += batch.size;
            }
            for (dev.afterglow.filters.synth.SensorFrame f; (f = sensor.pollFrame()) != null; ) {
                if (sendFrames) {
                    sink.frame(SensorFrame.newBuilder()
                            .setSequence(f.index())
                            .setSensorId(sensorId)
                            .setExposureStartUs(f.exposureStartUs())
                            .setExposureEndUs(f.exposureEndUs())
                            .setWidth(f.width())
                            .setHeight(f.height())
                            .setBitDepth(8)
                            .setPixels(ByteString.copyFrom(f.pixels()))
                            .build());
                }
            }
            sink.flush();
            t = sensor.timeUs();
        }
        return sent;
    }
}
