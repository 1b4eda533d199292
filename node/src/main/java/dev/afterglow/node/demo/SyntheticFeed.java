package dev.afterglow.node.demo;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.synth.EventGenerationModel;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.UdpSensorClient;
import com.google.protobuf.ByteString;
import dev.afterglow.proto.v1.SensorFrame;
import java.io.IOException;

/**
 * Plays the conveyor scene into a node as a sensor would: one packet per {@code packetUs} of
 * sensor time, paced to the wall clock (sensor time = time since start × speed), plus the
 * sensor's own 8-bit frames at 20 Hz over TCP. Runs on the calling thread until the duration
 * ends or the thread is interrupted.
 */
public final class SyntheticFeed {
    private final int width;
    private final int height;
    private final double noiseHz;
    private final long seed;

    public SyntheticFeed(int width, int height, double noiseHz, long seed) {
        this.width = width;
        this.height = height;
        this.noiseHz = noiseHz;
        this.seed = seed;
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
     * Streams {@code seconds} of sensor time (0: until interrupted).
     *
     * @param speed sensor seconds per wall second (1: real time); 0: as fast as possible
     * @return events sent
     */
    public long run(Sink sink, String sensorId, double seconds, long packetUs, double speed, boolean sendFrames)
            throws IOException, InterruptedException {
        ConveyorScene scene = new ConveyorScene(width, height, width * 0.4, seed);
        EventGenerationModel model = new EventGenerationModel(width, height, 0.2);
        NoiseSource noise = new NoiseSource(width, height, noiseHz, 4, 400, seed + 1);
        int pixels = width * height;
        double[] log = new double[pixels];
        byte[] frame = new byte[pixels];
        EventBatch signal = new EventBatch(Math.max(1 << 16, pixels * 4));
        EventBatch noiseBatch = new EventBatch(Math.max(1 << 16, pixels * 4));
        EventBatch merged = new EventBatch(2 * Math.max(1 << 16, pixels * 4));
        scene.logIntensity(0, log);
        model.start(0, log);
        long endUs = seconds > 0 ? Math.round(seconds * 1e6) : Long.MAX_VALUE;
        long start = System.nanoTime();
        long sent = 0;
        long frameSeq = 0;
        long nextSensorFrameUs = 50_000;
        for (long t = 0; t < endUs; t += packetUs) {
            if (Thread.currentThread().isInterrupted()) {
                throw new InterruptedException();
            }
            long to = t + packetUs;
            signal.reset(t);
            noiseBatch.reset(t);
            scene.logIntensity(to, log);
            model.advance(to, log, signal);
            noise.step(t, to, noiseBatch);
            BatchMerge.merge(signal, noiseBatch, merged);
            if (speed > 0) {
                long dueNanos = start + (long) (to * 1000 / speed);
                long wait = dueNanos - System.nanoTime();
                if (wait > 0) {
                    Thread.sleep(wait / 1_000_000, (int) (wait % 1_000_000));
                }
            }
            if (merged.size > 0) {
                sink.events(merged);
                sent += merged.size;
            }
            if (sendFrames && to >= nextSensorFrameUs) {
                long exposureStart = to - 5_000;
                scene.frame8(to - 2_500, log, frame);
                sink.frame(SensorFrame.newBuilder()
                        .setSequence(frameSeq++)
                        .setSensorId(sensorId)
                        .setExposureStartUs(exposureStart)
                        .setExposureEndUs(to)
                        .setWidth(width)
                        .setHeight(height)
                        .setBitDepth(8)
                        .setPixels(ByteString.copyFrom(frame))
                        .build());
                nextSensorFrameUs += 50_000;
            }
            sink.flush();
        }
        return sent;
    }
}
