package dev.afterglow.node.e2e;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.client.SensorClient;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicReference;

/**
 * Streams packets from a connected {@link SensorClient} at the pace a real sensor would send them
 * (a packet leaves when the host clock reaches its end), on a thread of its own; stop with
 * {@link #close()}, which also closes the client.
 */
final class PacedSender implements AutoCloseable {
    private final Thread thread;
    private final AtomicReference<Exception> error = new AtomicReference<>();
    private volatile int sent;

    PacedSender(SensorClient client, List<EventBatch> packets, long packetUs) {
        thread = new Thread(() -> {
            try (client) {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    long wait = start + (b.timeBaseUs + packetUs) * 1000 - System.nanoTime();
                    if (wait > 0) {
                        TimeUnit.NANOSECONDS.sleep(wait);
                    }
                    client.sendEvents(b);
                    client.flush();
                    sent++;
                }
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            } catch (Exception e) {
                error.set(e);
            }
        }, "paced-sender");
        thread.setDaemon(true);
        thread.start();
    }

    /** Packets sent so far. */
    int sent() {
        return sent;
    }

    /** Waits for the last packet; returns the sender's error, or null. */
    Exception finish(long timeoutMs) throws InterruptedException {
        thread.join(timeoutMs);
        return error.get();
    }

    @Override
    public void close() {
        thread.interrupt();
        try {
            thread.join(5_000);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }
}
