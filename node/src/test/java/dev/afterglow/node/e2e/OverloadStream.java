package dev.afterglow.node.e2e;

import com.google.protobuf.ByteString;
import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.IntensityFrame;
import java.io.IOException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import java.util.function.LongFunction;

/**
 * The pieces the overload tests share: packets of uniform events encoded once, a sender that
 * streams them in real time on the calling thread, and a subscriber thread that keeps every frame.
 */
final class OverloadStream {
    private OverloadStream() {
    }

    /** {@code count} events uniformly over a {@code w} x {@code h} sensor and over [0, spanUs), time ordered, encoded. */
    static byte[] uniformEvents(int w, int h, int count, long spanUs, long seed) {
        SplittableRandom r = new SplittableRandom(seed);
        long[] times = new long[count];
        for (int i = 0; i < count; i++) {
            times[i] = r.nextLong(spanUs);
        }
        Arrays.sort(times);
        EventBatch b = new EventBatch(count);
        b.reset(0);
        for (int i = 0; i < count; i++) {
            b.add(r.nextInt(w), r.nextInt(h), times[i], r.nextBoolean() ? 1 : -1);
        }
        return EventPacketCodec.encode(b);
    }

    /**
     * Sends one packet per {@code packetUs} of sensor time from 0 to {@code endUs}, each when the
     * host clock reaches its end, with the encoded events {@code eventsAt} gives for its start time.
     */
    static void sendPaced(SensorClient sensor, long endUs, long packetUs, LongFunction<byte[]> eventsAt)
            throws IOException, InterruptedException {
        long start = System.nanoTime();
        long seq = 0;
        for (long t = 0; t < endUs; t += packetUs) {
            byte[] events = eventsAt.apply(t);
            long wait = start + (t + packetUs) * 1000 - System.nanoTime();
            if (wait > 0) {
                TimeUnit.NANOSECONDS.sleep(wait);
            }
            sensor.send(Envelope.newBuilder().setSchemaVersion(1).setEvents(EventPacket.newBuilder()
                    .setSequence(seq++).setTimeBaseUs(t).setEventCount(events.length / 8)
                    .setEvents(ByteString.copyFrom(events))).build());
            sensor.flush();
        }
    }

    /** Reads every frame of {@code sub} on a thread of its own until the subscription is closed. */
    static final class FrameCollector {
        private final List<IntensityFrame> frames = new ArrayList<>();
        private final Thread reader;

        FrameCollector(SubscriberClient sub) {
            reader = new Thread(() -> {
                try {
                    while (true) {
                        IntensityFrame f = sub.next();
                        synchronized (frames) {
                            frames.add(f);
                        }
                    }
                } catch (Exception end) {
                    // the subscription is closed after the run
                }
            });
            reader.start();
        }

        /** Waits for the reader to end (after the subscription was closed). */
        void join() throws InterruptedException {
            reader.join(10_000);
        }

        /** A copy of the frames received so far. */
        List<IntensityFrame> frames() {
            synchronized (frames) {
                return new ArrayList<>(frames);
            }
        }
    }
}
