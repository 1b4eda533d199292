package dev.afterglow.node.surge;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import java.io.IOException;
import java.net.SocketTimeoutException;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.BlockingQueue;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;

/**
 * The load generator's reader of the frame topic: one consumer (its own group, from the end of the
 * topic) hands each sensor's frames to that sensor's probe. A probe that falls behind loses the
 * oldest frames of its queue (counted as missed on the grid, like a slow subscriber).
 */
final class FrameTopicReader implements AutoCloseable {
    private static final int QUEUE = 4096;
    private final KafkaConsumer<byte[], byte[]> consumer;
    private final Map<String, BlockingQueue<IntensityFrame>> queues = new HashMap<>();
    private final Thread thread;
    private volatile boolean closing;

    FrameTopicReader(String bootstrap, String topic, List<String> sensorIds) {
        for (String id : sensorIds) {
            queues.put(id, new ArrayBlockingQueue<>(QUEUE));
        }
        consumer = new KafkaConsumer<>(Map.of("bootstrap.servers", bootstrap, "group.id", "surge-frames-" + System.nanoTime(),
                "auto.offset.reset", "latest", "fetch.max.wait.ms", 5, "enable.auto.commit", false),
                new ByteArrayDeserializer(), new ByteArrayDeserializer());
        consumer.subscribe(List.of(topic));
        thread = new Thread(this::run, "surge-frame-topic");
        thread.setDaemon(true);
        thread.start();
    }

    private void run() {
        try {
            while (!closing) {
                for (ConsumerRecord<byte[], byte[]> r : consumer.poll(Duration.ofMillis(100))) {
                    BlockingQueue<IntensityFrame> q = r.key() == null ? null
                            : queues.get(new String(r.key(), StandardCharsets.UTF_8));
                    if (q == null || r.value() == null) {
                        continue;
                    }
                    IntensityFrame f;
                    try {
                        f = Envelope.parseFrom(r.value()).getIntensityFrame();
                    } catch (IOException e) {
                        continue;
                    }
                    while (!q.offer(f)) {
                        q.poll();
                    }
                }
            }
        } catch (org.apache.kafka.common.errors.WakeupException e) {
            // closing
        } finally {
            consumer.close(Duration.ofSeconds(2));
        }
    }

    /** The frames of one sensor. */
    SubscriberProbe.FrameFeed feed(String sensorId) {
        BlockingQueue<IntensityFrame> q = queues.get(sensorId);
        return () -> {
            try {
                IntensityFrame f = q.poll(200, TimeUnit.MILLISECONDS);
                if (f == null) {
                    throw new SocketTimeoutException("no frame");
                }
                return f;
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                throw new IOException("interrupted", e);
            }
        };
    }

    @Override
    public void close() {
        closing = true;
        consumer.wakeup();
        try {
            thread.join(5000);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }
}
