package dev.afterglow.node.live;

import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import io.netty.channel.Channel;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * The node's live viewers: who watches which sensor. At most {@link #MAX_VIEWERS} pages are
 * connected at once. Thread-safe.
 */
public final class LiveViews {
    /** Live view connections a node accepts at once. */
    public static final int MAX_VIEWERS = 16;
    /** WebSocket path of the live view. */
    public static final String SOCKET_PATH = "/live/ws";
    /** Unsent bytes at which a live view connection stops being writable (a few 320x240 frames). */
    public static final int HIGH_WATER_BYTES = 512 << 10;
    /** Unsent bytes at which it becomes writable again. */
    public static final int LOW_WATER_BYTES = 256 << 10;

    private final SensorRegistry sensors;
    private final NodeClock clock;
    private final AtomicInteger count = new AtomicInteger();

    public LiveViews(SensorRegistry sensors, NodeClock clock) {
        this.sensors = sensors;
        this.clock = clock;
    }

    NodeClock clock() {
        return clock;
    }

    /** True while at least one live view page watches {@code sensorId}. Any thread. */
    public boolean watching(String sensorId) {
        SensorPipeline p = sensors.get(sensorId);
        return p != null && p.live().watching();
    }

    /** Connected live view pages over all sensors. */
    public int count() {
        return count.get();
    }

    /** The sensor, or null if the node does not know it. */
    SensorPipeline sensor(String sensorId) {
        return sensors.get(sensorId);
    }

    /** Starts sending {@code sensor}'s frames to {@code channel}; null if the viewer limit is reached. */
    LiveViewer attach(SensorPipeline sensor, Channel channel, int fps) {
        if (count.incrementAndGet() > MAX_VIEWERS) {
            count.decrementAndGet();
            return null;
        }
        LiveViewer v = new LiveViewer(channel, fps, sensor.live().raster());
        sensor.live().add(v);
        return v;
    }

    /** Stops sending to a viewer. */
    void detach(SensorPipeline sensor, LiveViewer v) {
        sensor.live().remove(v);
        count.decrementAndGet();
    }
}
