package dev.afterglow.node.live;

import io.netty.channel.Channel;

/**
 * One browser connection watching one sensor. Created on an I/O thread; after it is published to
 * the sensor's {@link LiveTap} its activity and schedule fields belong to the sensor's pipeline
 * thread.
 */
final class LiveViewer {
    final Channel channel;
    final int fps;
    final long intervalNanos;
    /** ON minus OFF per live pixel since the last frame this viewer was sent (pipeline thread). */
    final int[] pending;
    long pendingEvents;
    long nextDueNanos = Long.MIN_VALUE;

    LiveViewer(Channel channel, int fps, LiveRaster raster) {
        this.channel = channel;
        this.fps = fps;
        this.intervalNanos = 1_000_000_000L / fps;
        this.pending = new int[raster.activityLength()];
    }
}
