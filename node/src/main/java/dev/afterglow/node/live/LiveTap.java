package dev.afterglow.node.live;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.publish.FrameData;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import io.netty.buffer.ByteBuf;
import io.netty.channel.Channel;
import io.netty.handler.codec.http.websocketx.BinaryWebSocketFrame;
import java.util.Arrays;

/**
 * A sensor's live view tap, called by its pipeline at two points: {@link #accumulate} with every
 * batch of received events before the chain sees them, and {@link #onFrame} after every published
 * frame.
 *
 * <p>While nobody watches, both calls cost one volatile read. While someone watches, each event
 * adds its polarity to a primitive activity map at live-image resolution (no allocation, see
 * {@link LiveRaster}), and each viewer is sent at most its {@code fps} frames per second of host
 * time: the frame shrunk to the live size and the activity since the frame it was last sent,
 * packed into a pooled buffer ({@link LiveFrameCodec}). A viewer whose connection is not writable
 * (unsent bytes above the HTTP server's high water mark) is skipped for that turn and the skip is
 * counted ({@code afterglow.live.frames.skipped}); its activity keeps adding up and it gets the
 * latest frame at its next turn, so at most a water mark's worth of bytes waits per viewer.
 *
 * <p>Threading: {@link #accumulate} and {@link #onFrame} run only on the sensor's pipeline
 * thread; {@link #add}, {@link #remove} and {@link #watching} from any thread.
 */
public final class LiveTap implements dev.afterglow.node.publish.FrameSink {
    private static final LiveViewer[] NONE = {};

    private final LiveRaster raster;
    private final NodeClock clock;
    private final Counters counters;
    private volatile LiveViewer[] viewers = NONE;

    // Pipeline thread only.
    private final int[] activity;
    private long activityEvents;
    private boolean idle = true;
    private final byte[] gray;
    private final byte[] packed;

    /** A tap for a {@code width x height} sensor whose counters are {@code counters}. */
    public LiveTap(int width, int height, NodeClock clock, Counters counters) {
        this.raster = new LiveRaster(width, height, LiveRaster.MAX_WIDTH);
        this.clock = clock;
        this.counters = counters;
        this.activity = new int[raster.activityLength()];
        this.gray = new byte[raster.pixels()];
        this.packed = new byte[raster.pixels()];
    }

    /** The live image geometry. */
    public LiveRaster raster() {
        return raster;
    }

    /** True while at least one viewer watches. Any thread. */
    public boolean watching() {
        return viewers.length > 0;
    }

    /** Number of viewers. Any thread. */
    public int viewers() {
        return viewers.length;
    }

    synchronized void add(LiveViewer v) {
        LiveViewer[] next = Arrays.copyOf(viewers, viewers.length + 1);
        next[next.length - 1] = v;
        viewers = next;
    }

    synchronized void remove(LiveViewer v) {
        LiveViewer[] cur = viewers;
        for (int i = 0; i < cur.length; i++) {
            if (cur[i] == v) {
                LiveViewer[] next = new LiveViewer[cur.length - 1];
                System.arraycopy(cur, 0, next, 0, i);
                System.arraycopy(cur, i + 1, next, i, cur.length - i - 1);
                viewers = cur.length == 1 ? NONE : next;
                return;
            }
        }
    }

    /** Adds a batch of received events (inside the sensor) to the activity map if anyone watches. Pipeline thread. */
    public void accumulate(EventBatch b) {
        if (!active(viewers)) {
            return;
        }
        raster.accumulate(b, activity);
        activityEvents += b.size;
    }

    /** Returns whether anyone watches; clears what was left from before a pause in watching. */
    private boolean active(LiveViewer[] v) {
        if (v.length == 0) {
            idle = true;
            return false;
        }
        if (idle) {
            Arrays.fill(activity, 0);
            activityEvents = 0;
            idle = false;
        }
        return true;
    }

    /**
     * Sends the frame to each viewer whose turn has come. Pipeline thread, during publishing (the
     * frame's arrays are valid only now).
     */
    @Override
    public boolean wantsFrames() {
        return watching();
    }

    @Override
    public void accept(FrameData frame) {
        onFrame(frame);
    }

    public void onFrame(FrameData frame) {
        LiveViewer[] v = viewers;
        if (!active(v)) {
            return;
        }
        long now = clock.monotonicNanos();
        boolean anyDue = false;
        for (LiveViewer viewer : v) {
            anyDue |= now >= viewer.nextDueNanos;
        }
        if (!anyDue) {
            return;
        }
        // Each viewer keeps the activity since the frame it was last sent.
        for (LiveViewer viewer : v) {
            int[] p = viewer.pending;
            for (int i = 0; i < p.length; i++) {
                p[i] += activity[i];
            }
            viewer.pendingEvents += activityEvents;
        }
        Arrays.fill(activity, 0);
        activityEvents = 0;
        boolean grayReady = false;
        for (LiveViewer viewer : v) {
            if (now < viewer.nextDueNanos) {
                continue;
            }
            // Keep the viewer's grid despite frame jitter, but after a stall of the pipeline never
            // send two frames closer than half an interval.
            long due = viewer.nextDueNanos == Long.MIN_VALUE ? now : viewer.nextDueNanos;
            viewer.nextDueNanos = Math.max(due + viewer.intervalNanos, now + viewer.intervalNanos / 2);
            Channel ch = viewer.channel;
            if (!ch.isActive()) {
                continue;
            }
            if (!ch.isWritable()) {
                counters.increment(NodeCounter.LIVE_FRAMES_SKIPPED);
                continue;
            }
            if (!grayReady) {
                raster.downscaleGray(frame.gray8().get(), gray);
                grayReady = true;
            }
            raster.packActivity(viewer.pending, packed);
            ByteBuf buf = ch.alloc().buffer(LiveFrameCodec.length(raster.pixels()));
            LiveFrameCodec.write(buf, raster.factor(), frame.sequence(), frame.frameTimeUs(), raster.width(),
                    raster.height(), viewer.pendingEvents, gray, packed);
            ch.writeAndFlush(new BinaryWebSocketFrame(buf), ch.voidPromise());
            Arrays.fill(viewer.pending, 0);
            viewer.pendingEvents = 0;
            counters.increment(NodeCounter.LIVE_FRAMES_SENT);
        }
    }
}
