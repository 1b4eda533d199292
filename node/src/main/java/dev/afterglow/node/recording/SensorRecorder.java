package dev.afterglow.node.recording;

import dev.afterglow.node.config.RecordConfig;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingWriter;
import java.io.IOException;
import java.nio.file.Path;
import java.time.Instant;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.util.List;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.BlockingQueue;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;

/**
 * Records what one sensor sends, on a thread of its own so the live path never waits on the disk:
 * the I/O threads {@link #offer} messages into a queue bounded in bytes (a full queue drops and
 * counts), and the recorder thread writes them with a {@link RecordingWriter} into
 * FOLDER/SENSOR-ID/SENSOR-ID-yyyyMMdd-HHmmss-NNNNNN.agrec (the id made safe as a file name, see {@link #fileName}). A write error (disk full, a file
 * system error) stops the recording, counts it, logs one line and shows in {@link #status()}; the
 * sensor's live processing goes on. {@link #pin} copies the segments still on disk aside (a
 * flight recorder deletes old ones) into FOLDER/SENSOR-ID/pinned/NAME/.
 */
public final class SensorRecorder implements AutoCloseable {
    /** Who writes the files. */
    public static final String WRITER = "afterglow 0.1.0";
    private static final DateTimeFormatter STAMP = DateTimeFormatter.ofPattern("yyyyMMdd-HHmmss").withZone(ZoneOffset.UTC);

    private record Item(long arrivalNanos, Envelope envelope, int bytes) {
    }

    private record Pin(String name, CompletableFuture<List<Path>> done) {
    }

    private static final Object STOP = new Object();

    private final String sensorId;
    private final RecordConfig config;
    private final Counters counters;
    private final BlockingQueue<Object> queue = new ArrayBlockingQueue<>(1 << 16);
    private final AtomicLong queuedBytes = new AtomicLong();
    private final long maxQueuedBytes;
    private final Path folder;
    /** Written under the lock in {@link #start}; read without it on I/O threads. */
    private volatile Thread thread;
    private volatile boolean failed;
    private volatile String status = "waiting for the sensor";
    private volatile Path firstSegment;

    /** A recorder for sensor {@code sensorId}; nothing is written before {@link #start}. */
    public SensorRecorder(String sensorId, RecordConfig config, Counters counters) {
        this.sensorId = sensorId;
        this.config = config;
        this.counters = counters;
        this.maxQueuedBytes = (long) (config.queueMb * (1 << 20));
        this.folder = Path.of(config.folder).resolve(fileName(sensorId));
    }

    /**
     * The sensor said hello (a TCP connection, or the first datagram of a UDP sensor): starts the
     * recording on its first call, and records the hello (token never written) on each.
     */
    public synchronized void start(SensorHello hello, long arrivalNanos) {
        if (failed) {
            return;
        }
        if (thread == null) {
            long startNanos = arrivalNanos;
            thread = new Thread(() -> run(hello, startNanos), "afterglow-recorder-" + sensorId);
            thread.setDaemon(true);
            thread.start();
        }
        offer(arrivalNanos, Envelope.newBuilder().setSchemaVersion(1).setHello(hello).build());
    }

    /** True once started (a hello came). */
    public boolean started() {
        return thread != null;
    }

    /** Queues one received message for the disk; never blocks. Called on I/O threads. */
    public void offer(long arrivalNanos, Envelope envelope) {
        if (failed || thread == null) {
            counters.increment(NodeCounter.RECORDING_DROPPED);
            return;
        }
        int bytes = envelope.getSerializedSize();
        if (queuedBytes.addAndGet(bytes) > maxQueuedBytes || !queue.offer(new Item(arrivalNanos, envelope, bytes))) {
            queuedBytes.addAndGet(-bytes);
            counters.increment(NodeCounter.RECORDING_DROPPED);
        }
    }

    /** Copies the segments on disk now into FOLDER/SENSOR-ID/pinned/{@code name}/; completes with the copies. */
    public CompletableFuture<List<Path>> pin(String name) {
        CompletableFuture<List<Path>> done = new CompletableFuture<>();
        if (!name.matches("[A-Za-z0-9._-]{1,100}") || name.startsWith(".")) {
            done.completeExceptionally(new IllegalArgumentException("pin name '" + name + "': 1 to 100 of A-Z a-z 0-9 . _ -, not starting with ."));
        } else if (failed || thread == null) {
            done.completeExceptionally(new IllegalStateException("sensor " + sensorId + ": nothing is being recorded (" + status + ")"));
        } else if (!queue.offer(new Pin(name, done))) {
            done.completeExceptionally(new IllegalStateException("sensor " + sensorId + ": the recording queue is full; try again"));
        }
        return done;
    }

    /**
     * A sensor id (from the wire for an unlisted sensor: A-Z a-z 0-9 . _ : -) as a file name that
     * stays inside the recordings folder: ':' becomes '_', and an id of dots only ("..") gets a '_' in front.
     */
    static String fileName(String sensorId) {
        String safe = sensorId.replace(':', '_');
        return safe.chars().allMatch(c -> c == '.') ? "_" + safe : safe;
    }

    private void run(SensorHello hello, long startNanos) {
        String name = fileName(sensorId) + "-" + STAMP.format(Instant.now());
        RecordingWriter writer = null;
        try {
            writer = RecordingWriter.create(folder, name, hello, WRITER, System.currentTimeMillis() * 1000, config.settings());
            firstSegment = writer.segments().get(0);
            status = "recording into " + folder;
            while (true) {
                Object next = queue.poll(100, TimeUnit.MILLISECONDS);
                long nowUs = (System.nanoTime() - startNanos) / 1000;
                if (next == STOP) {
                    break;
                }
                if (next instanceof Item item) {
                    queuedBytes.addAndGet(-item.bytes());
                    writer.write(Math.max(0, (item.arrivalNanos() - startNanos) / 1000), item.envelope());
                    counters.increment(NodeCounter.RECORDED_MESSAGES);
                } else if (next instanceof Pin pin) {
                    try {
                        pin.done().complete(writer.pin(folder.resolve("pinned").resolve(pin.name())));
                    } catch (IOException e) {
                        pin.done().completeExceptionally(e);
                    }
                }
                writer.flushIfDue(nowUs);
            }
            writer.close();
            status = "stopped";
        } catch (IOException e) {
            fail(e);
            closeQuietly(writer);
        } catch (InterruptedException e) {
            closeQuietly(writer);
            Thread.currentThread().interrupt();
        }
    }

    private void fail(IOException e) {
        failed = true;
        status = "failed: " + e.getMessage();
        counters.increment(NodeCounter.RECORDING_FAILURES);
        OnceLog.warn("recording:" + sensorId, "sensor " + sensorId + ": recording stopped after a write error (live processing goes on): "
                + e.getMessage(), null);
        for (Object o; (o = queue.poll()) != null; ) {
            if (o instanceof Item item) {
                queuedBytes.addAndGet(-item.bytes());
                counters.increment(NodeCounter.RECORDING_DROPPED);
            } else if (o instanceof Pin pin) {
                pin.done().completeExceptionally(new IllegalStateException(status));
            }
        }
    }

    private static void closeQuietly(RecordingWriter writer) {
        if (writer != null) {
            try {
                writer.close();
            } catch (IOException ignored) {
                // already failed: the status says why
            }
        }
    }

    /** "waiting for the sensor", "recording into FOLDER", "failed: WHY" or "stopped". */
    public String status() {
        return status;
    }

    /** The recording's first segment file, once it exists (tests, status). */
    public Path firstSegment() {
        return firstSegment;
    }

    /** Asks the thread to write what is queued, close the files and end, without waiting. */
    public void stopSoon() {
        if (!queue.offer(STOP)) {
            // A full queue: wait for room on a helper thread, not on the caller's (the pipeline's).
            Thread helper = new Thread(() -> {
                try {
                    queue.put(STOP);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                }
            }, "afterglow-recorder-stop-" + sensorId);
            helper.setDaemon(true);
            helper.start();
        }
    }

    /** Writes what is queued, closes the files and ends the thread (waits up to 10 s). */
    @Override
    public void close() {
        Thread t;
        synchronized (this) {
            t = thread;
        }
        if (t == null) {
            return;
        }
        try {
            queue.put(STOP);
            t.join(10_000);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }
}
