package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.publish.Subscription;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import io.netty.channel.embedded.EmbeddedChannel;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * A failure while handling one sensor or one subscriber costs that sensor or subscriber only, the
 * shared pipeline thread carries on, and a pipeline that stops making progress shows on /ready.
 * Faults are injected the way a bug would strike: an exception thrown on the pipeline thread, a
 * subscription that slipped past validation, a task that hangs.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class PipelineIsolationTest {
    private static final int W = 32;
    private static final int H = 24;

    private static NodeConfig config() {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                limits: {watchdog-stall-ms: 500}
                sensors:
                  - {id: a, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 2000}
                  - {id: b, width: %d, height: %d, frame-rate-hz: 100, latency-budget-ms: 2000}
                """.formatted(W, H, W, H), "test");
    }

    /** Streams one event per millisecond to both sensors until stopped. */
    private static Thread stream(AfterglowNode node, AtomicBoolean stop) {
        Thread t = new Thread(() -> {
            try (SensorClient a = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "a", W, H, false);
                    SensorClient b = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "b", W, H, false)) {
                EventBatch batch = new EventBatch(1);
                long start = System.nanoTime();
                for (long us = 1_000; !stop.get(); us += 1_000) {
                    long wait = start + us * 1000 - System.nanoTime();
                    if (wait > 0) {
                        TimeUnit.NANOSECONDS.sleep(wait);
                    }
                    batch.reset(us - 1_000);
                    batch.add((int) (us / 1000) % W, 3, us - 500, 1);
                    a.sendEvents(batch);
                    b.sendEvents(batch);
                    a.flush();
                    b.flush();
                }
            } catch (Exception e) {
                // stopped
            }
        });
        t.setDaemon(true);
        t.start();
        return t;
    }

    private static void framesFlow(SubscriberClient sub, int n) throws Exception {
        long previous = -1;
        for (int i = 0; i < n; i++) {
            IntensityFrame f = sub.next();
            assertTrue(f.getFrameTimeUs() > previous);
            previous = f.getFrameTimeUs();
        }
    }

    @Test
    void shouldResetOnlyTheFailingSensorAndKeepTheThreadServingOthers() throws Exception {
        AtomicBoolean stop = new AtomicBoolean();
        try (AfterglowNode node = AfterglowNode.start(config());
                SubscriberClient subA = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "a", 0, PixelFormat.PIXEL_FORMAT_GRAY8);
                SubscriberClient subB = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "b", 0, PixelFormat.PIXEL_FORMAT_GRAY8)) {
            subA.setTimeoutMillis(10_000);
            subB.setTimeoutMillis(10_000);
            Thread sender = stream(node, stop);
            framesFlow(subA, 10);
            SensorPipeline a = node.sensors().get("a");
            // Both sensors share the one pipeline thread; a bug strikes while handling sensor a.
            assertEquals(a.loop(), node.sensors().get("b").loop());
            a.execute(() -> {
                throw new IllegalStateException("injected fault");
            });
            // Sensor b never notices; sensor a starts afresh and serves again.
            framesFlow(subB, 50);
            framesFlow(subA, 50);
            assertEquals(1, a.counters().get(NodeCounter.PIPELINE_FAILURES));
            assertEquals(0, node.sensors().get("b").counters().get(NodeCounter.PIPELINE_FAILURES));

            // A subscription that slipped past validation (a region outside the sensor) fails in
            // rendering: that subscriber is dropped, the others keep their frames.
            EmbeddedChannel rogue = new EmbeddedChannel();
            node.publisher().add(new Subscription(rogue, "a", PixelFormat.PIXEL_FORMAT_GRAY8, -16, 0, 8, 8, 1, 0));
            framesFlow(subA, 30);
            assertEquals(1, node.counters().get(NodeCounter.SUBSCRIBER_FAILURES));
            assertTrue(node.publisher().subscriptions("a").stream().noneMatch(s -> s.channel() == rogue));
            assertEquals(1, a.counters().get(NodeCounter.PIPELINE_FAILURES), "the sensor itself was not reset for it");
            stop.set(true);
            sender.join(5_000);
        }
    }

    @Test
    void shouldReportAStalledPipelineOnReadyAndCountIt() throws Exception {
        AtomicBoolean stop = new AtomicBoolean();
        HttpClient http = HttpClient.newHttpClient();
        try (AfterglowNode node = AfterglowNode.start(config())) {
            URI ready = URI.create("http://127.0.0.1:" + node.httpPort() + "/ready");
            Thread sender = stream(node, stop);
            assertEquals(200, http.send(HttpRequest.newBuilder(ready).build(), HttpResponse.BodyHandlers.ofString()).statusCode());
            SensorPipeline a = node.sensors().get("a");
            CountDownLatch release = new CountDownLatch(1);
            a.execute(() -> { // a task that hangs: the thread makes no progress
                try {
                    release.await(20, TimeUnit.SECONDS);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                }
            });
            HttpResponse<String> r = null;
            long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(10);
            while (System.nanoTime() < deadline) {
                r = http.send(HttpRequest.newBuilder(ready).build(), HttpResponse.BodyHandlers.ofString());
                if (r.statusCode() == 503 && r.body().contains("a, b")) {
                    break;
                }
                Thread.sleep(100);
            }
            assertEquals(503, r.statusCode());
            // b shares the hung thread, so it makes no progress either: both are named
            assertEquals("stalled: a, b\n", r.body());
            assertEquals(1, a.counters().get(NodeCounter.PIPELINE_STALLS));
            release.countDown();
            deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(10);
            while (System.nanoTime() < deadline
                    && http.send(HttpRequest.newBuilder(ready).build(), HttpResponse.BodyHandlers.ofString()).statusCode() != 200) {
                Thread.sleep(100);
            }
            assertEquals(200, http.send(HttpRequest.newBuilder(ready).build(), HttpResponse.BodyHandlers.ofString()).statusCode(),
                    "ready again once the pipeline makes progress");
            stop.set(true);
            sender.join(5_000);
        }
    }
}
