package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/** Extra readouts every N events, and a frame-rate change at run time taking effect on the grid. */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class ReadoutScheduleTest {

    @Test
    void shouldReadOutEveryNEventsAndFollowARateChange() throws Exception {
        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                sensors:
                  - {id: a, width: 64, height: 48, frame-rate-hz: 100, latency-budget-ms: 5000, readout-every-events: 100}
                """, "test");
        List<EventBatch> packets = SceneEvents.packets(64, 48, 2_000_000, 1_000, 4);
        try (AfterglowNode node = AfterglowNode.start(config);
                SubscriberClient all = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "a", 0, PixelFormat.PIXEL_FORMAT_GRAY8);
                SubscriberClient half = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "a", 50, PixelFormat.PIXEL_FORMAT_GRAY8)) {
            StreamingEndToEndTest.waitFor(() -> node.publisher().count() == 2);
            all.setTimeoutMillis(10_000);
            half.setTimeoutMillis(10_000);
            try (SensorClient s = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "a", 64, 48, false)) {
                long start = System.nanoTime();
                boolean changed = false;
                for (EventBatch b : packets) {
                    if (!changed && b.timeBaseUs >= 1_000_000) {
                        SensorConfig slower = node.sensors().get("a").config().forSensor("a", 64, 48);
                        slower.frameRateHz = 20;
                        slower.readoutEveryEvents = 0;
                        node.sensors().get("a").reconfigure(slower);
                        changed = true;
                    }
                    StreamingEndToEndTest.paceRealTime(start, b.timeBaseUs + 1_000);
                    s.sendEvents(b);
                    s.flush();
                }
            }
            List<IntensityFrame> frames = new ArrayList<>();
            while (true) {
                IntensityFrame f = all.next();
                frames.add(f);
                if (f.getFrameTimeUs() >= 1_900_000) {
                    break;
                }
            }
            int offGrid = 0;
            long previousGrid = 0;
            for (IntensityFrame f : frames) {
                long t = f.getFrameTimeUs();
                if (t < 1_000_000) {
                    if (t % 10_000 != 0) {
                        offGrid++;
                        assertTrue(f.getProvenance().getEventsApplied() >= 100, "an extra readout after 100 applied events");
                    }
                } else if (t > 1_060_000) {
                    assertEquals(0, t % 50_000, "after the change: 20 Hz grid, no extra readouts: " + t);
                    if (previousGrid > 1_060_000) {
                        assertEquals(50_000, t - previousGrid);
                    }
                    previousGrid = t;
                }
            }
            assertTrue(offGrid > 10, "extra readouts between grid frames: " + offGrid);
            // The 50 Hz subscriber saw only grid frames, every second one while the sensor ran at 100 Hz.
            long last = 0;
            for (int i = 0; i < 20; i++) {
                IntensityFrame f = half.next();
                assertEquals(0, f.getFrameTimeUs() % 20_000, "decimated frames are on the grid");
                if (last > 0) {
                    assertEquals(20_000, f.getFrameTimeUs() - last);
                }
                last = f.getFrameTimeUs();
            }
        }
    }
}
