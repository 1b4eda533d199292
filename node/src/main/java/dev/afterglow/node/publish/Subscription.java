package dev.afterglow.node.publish;

import dev.afterglow.proto.v1.PixelFormat;
import io.netty.channel.Channel;
import java.util.concurrent.atomic.AtomicLong;

/**
 * One subscriber's validated request and its delivery counts. Frames are decimated from the
 * sensor's rate to the nearest rate not above the requested one (every {@code d}-th frame of the
 * sensor's grid, {@code d = ceil(sensorRate / rate)}); rate 0 takes every frame, including frames
 * read out off the grid (every-N-events readout).
 */
public final class Subscription {
    final Channel channel;
    final String sensorId;
    final PixelFormat format;
    final int regionX;
    final int regionY;
    final int regionWidth;
    final int regionHeight;
    final int downscale;
    final double rateHz;
    final RenderKey key;
    private final AtomicLong delivered = new AtomicLong();
    private final AtomicLong missed = new AtomicLong();

    public Subscription(Channel channel, String sensorId, PixelFormat format, int regionX, int regionY,
            int regionWidth, int regionHeight, int downscale, double rateHz) {
        this.channel = channel;
        this.sensorId = sensorId;
        this.format = format;
        this.regionX = regionX;
        this.regionY = regionY;
        this.regionWidth = regionWidth;
        this.regionHeight = regionHeight;
        this.downscale = downscale;
        this.rateHz = rateHz;
        this.key = new RenderKey(format, regionX, regionY, regionWidth, regionHeight, downscale);
    }

    /** True if this subscriber takes the frame with grid index {@code frameIndex} (-1: off the grid) at sensor rate {@code sensorRateHz}. */
    boolean wants(long frameIndex, double sensorRateHz) {
        return onRate(frameIndex, sensorRateHz, rateHz);
    }

    /**
     * True if an output at {@code rateHz} (0: every frame) takes grid frame {@code frameIndex} of a
     * sensor read out at {@code sensorRateHz}: every d-th frame, d = ceil(sensor rate / rate);
     * a frame off the grid (index -1) only when it takes every frame.
     */
    public static boolean onRate(long frameIndex, double sensorRateHz, double rateHz) {
        if (rateHz <= 0) {
            return true;
        }
        long divisor = Math.max(1, (long) Math.ceil(sensorRateHz / rateHz - 1e-9));
        if (frameIndex < 0) {
            return divisor == 1;
        }
        return frameIndex % divisor == 0;
    }

    /** Frames written to this subscriber. */
    public long delivered() {
        return delivered.get();
    }

    /** Frames this subscriber missed because its connection was not writable. */
    public long missed() {
        return missed.get();
    }

    void countDelivered() {
        delivered.incrementAndGet();
    }

    void countMissed() {
        missed.incrementAndGet();
    }

    /** The sensor subscribed to. */
    public String sensorId() {
        return sensorId;
    }

    /** The subscriber's connection. */
    public Channel channel() {
        return channel;
    }

    /** What must be rendered for this subscriber; subscribers with equal keys share one encoding. */
    record RenderKey(PixelFormat format, int x, int y, int width, int height, int downscale) {
    }
}
