package dev.afterglow.node.surge;

import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.Provenance;
import java.io.IOException;
import java.net.SocketTimeoutException;
import org.HdrHistogram.Histogram;
import org.HdrHistogram.SingleWriterRecorder;

/**
 * One subscriber of the load generator, reading frames on its own thread and timing each frame
 * whose sensor time lies in the current step's window of its sensor:
 * <ul>
 *   <li>the frame's own latency fields, {@code sensor_to_publish_us} and {@code arrival_to_publish_us}
 *       (the latter only when the frame's window received packets);</li>
 *   <li>its age on the generator's clock: arrival here minus the host time at which the sender
 *       handed the frame's sensor time to the socket ({@link SensorSender#sentAtNanos}). Both are
 *       {@code System.nanoTime()}, which on Linux reads CLOCK_MONOTONIC, one clock for every process
 *       of the machine; so this holds only with the node on the same host (loopback);</li>
 *   <li>frames missed: gaps on the node's frame grid. Frame k of a node at R Hz shows sensor time
 *       {@code floor(k · 10^6 / R)}; a subscriber at rate r takes every d-th grid frame,
 *       {@code d = ceil(R / r)} (every frame for r = 0), so between two received grid frames
 *       {@code (k2 - k1) / d - 1} were missed, whether the node skipped them (too late) or dropped
 *       them for this subscriber (connection backed up).</li>
 * </ul>
 * Latencies go into single-writer HdrHistogram recorders (microseconds, 1 us .. 1 hour, 3 significant
 * digits) that the main thread harvests without stopping the reader.
 */
final class SubscriberProbe implements AutoCloseable {
    private static final long HIGHEST_US = 3_600_000_000L;

    /** Where frames come from: a subscriber connection or a frame topic. */
    interface FrameFeed {
        /** The next frame; {@link SocketTimeoutException} when none came within about 200 ms. */
        IntensityFrame next() throws IOException;
    }

    private final FrameFeed feed;
    private final AutoCloseable resource;
    private final SensorSender sender;
    private final double nodeRateHz;
    private final long divisor;
    private final Thread thread;
    private volatile Window window;
    private volatile boolean closing;
    private volatile IOException failure;

    /** Numbers of one subscriber in one step. Single writer (the probe's thread). */
    static final class Window {
        final SingleWriterRecorder ownClock = new SingleWriterRecorder(HIGHEST_US, 3);
        final SingleWriterRecorder sensorToPublish = new SingleWriterRecorder(HIGHEST_US, 3);
        final SingleWriterRecorder arrivalToPublish = new SingleWriterRecorder(HIGHEST_US, 3);
        volatile long frames;
        volatile long missed;
        volatile long untimed;
        private long lastGrid = -1;
    }

    /** Harvested numbers of one window. */
    record Result(long frames, long missed, long untimed, Histogram ownClock, Histogram sensorToPublish,
            Histogram arrivalToPublish) {
    }

    SubscriberProbe(SubscriberClient client, SensorSender sender, double nodeRateHz, double subscriberRateHz, String name)
            throws IOException {
        this(polling(client)::next, client, sender, nodeRateHz, subscriberRateHz, name);
    }

    /** The reader wakes every 200 ms without a frame to see whether it should stop. */
    private static SubscriberClient polling(SubscriberClient client) throws IOException {
        client.setTimeoutMillis(200);
        return client;
    }

    /**
     * @param resource closed with the probe (the subscriber connection), or null
     */
    SubscriberProbe(FrameFeed feed, AutoCloseable resource, SensorSender sender, double nodeRateHz, double subscriberRateHz,
            String name) throws IOException {
        this.feed = feed;
        this.resource = resource;
        this.sender = sender;
        this.nodeRateHz = nodeRateHz;
        this.divisor = subscriberRateHz <= 0 ? 1 : Math.max(1, (long) Math.ceil(nodeRateHz / subscriberRateHz - 1e-9));
        this.thread = new Thread(this::readLoop, name);
        this.thread.setDaemon(true);
        this.thread.start();
    }

    /** Starts counting into a new window (the sender's window says which frames belong to it). */
    void open() {
        window = new Window();
    }

    /** Stops counting and returns the window's numbers. */
    Result harvest() {
        Window w = window;
        window = null;
        if (w == null) {
            w = new Window();
        }
        return new Result(w.frames, w.missed, w.untimed, w.ownClock.getIntervalHistogram(),
                w.sensorToPublish.getIntervalHistogram(), w.arrivalToPublish.getIntervalHistogram());
    }

    /** The error that ended the reader early, or null. */
    IOException failure() {
        return failure;
    }

    private void readLoop() {
        while (!closing) {
            IntensityFrame f;
            try {
                f = feed.next();
            } catch (SocketTimeoutException e) {
                continue;
            } catch (IOException e) {
                if (!closing) {
                    failure = e;
                }
                return;
            }
            long arrivedNs = System.nanoTime();
            Window w = window;
            long t = f.getFrameTimeUs();
            if (w != null && sender.inWindow(t)) {
                record(w, f, t, arrivedNs);
            }
        }
    }

    private void record(Window w, IntensityFrame f, long t, long arrivedNs) {
        w.frames = w.frames + 1;
        long k = Math.round(t * nodeRateHz / 1e6);
        if ((long) Math.floor(k * 1e6 / nodeRateHz + 1e-6) == t) { // a frame on the node's grid
            if (w.lastGrid >= 0 && k > w.lastGrid) {
                w.missed = w.missed + Math.max(0, (k - w.lastGrid) / divisor - 1);
            }
            w.lastGrid = k;
        }
        Provenance p = f.getProvenance();
        w.sensorToPublish.recordValue(clamp(p.getSensorToPublishUs()));
        if (p.getArrivalToPublishUs() > 0) {
            w.arrivalToPublish.recordValue(clamp(p.getArrivalToPublishUs()));
        }
        long sentNs = sender.sentAtNanos(t);
        if (sentNs >= 0) {
            w.ownClock.recordValue(clamp((arrivedNs - sentNs) / 1000));
        } else {
            w.untimed = w.untimed + 1;
        }
    }

    private static long clamp(long us) {
        return Math.max(0, Math.min(HIGHEST_US, us));
    }

    @Override
    public void close() throws IOException {
        closing = true;
        try {
            if (resource != null) {
                resource.close();
            }
        } catch (IOException | RuntimeException e) {
            throw e;
        } catch (Exception e) {
            throw new IOException(e);
        } finally {
            try {
                thread.join(2_000);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
        }
    }
}
