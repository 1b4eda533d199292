package dev.afterglow.node.publish;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.node.ingest.ErrorReplies;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Region;
import dev.afterglow.proto.v1.Subscribe;
import io.netty.buffer.ByteBuf;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.SimpleChannelInboundHandler;

/**
 * A subscriber's connection: the first envelope must be a valid {@link Subscribe} for a known
 * sensor; the node then writes intensity frames until either side closes. A bad request is
 * answered with an error report and the connection closed. Disconnecting removes the subscription.
 */
public final class SubscriberHandler extends SimpleChannelInboundHandler<ByteBuf> {
    private final SensorRegistry registry;
    private final FramePublisher publisher;
    private final int maxSubscribers;
    private final Counters nodeCounters;
    private Subscription subscription;

    public SubscriberHandler(SensorRegistry registry, FramePublisher publisher, int maxSubscribers) {
        this.registry = registry;
        this.publisher = publisher;
        this.maxSubscribers = maxSubscribers;
        this.nodeCounters = registry.nodeCounters();
    }

    @Override
    protected void channelRead0(ChannelHandlerContext ctx, ByteBuf msg) {
        Envelope envelope;
        try {
            envelope = Envelopes.parse(msg);
        } catch (InvalidProtocolBufferException e) {
            reject(ctx, "malformed", "not a valid envelope");
            return;
        }
        if (!envelope.hasSubscribe() || subscription != null) {
            reject(ctx, "protocol", subscription != null ? "already subscribed" : "expected subscribe first");
            return;
        }
        Subscribe s = envelope.getSubscribe();
        SensorPipeline sensor = registry.get(s.getSensorId());
        if (sensor == null) {
            reject(ctx, "unknown-sensor", "no sensor " + s.getSensorId() + " (it must be listed or have connected)");
            return;
        }
        if (publisher.count() >= maxSubscribers) {
            reject(ctx, "limit", "subscriber limit " + maxSubscribers + " reached");
            return;
        }
        // Resolve the defaults once (whole sensor, no downscale, 8-bit), then check what was resolved.
        Region r = s.getRegion();
        boolean whole = r.getWidth() == 0 && r.getHeight() == 0;
        int x = whole ? 0 : r.getX();
        int y = whole ? 0 : r.getY();
        int w = whole ? sensor.width() : r.getWidth();
        int h = whole ? sensor.height() : r.getHeight();
        int downscale = s.getDownscale() == 0 ? 1 : s.getDownscale();
        PixelFormat format = s.getFormat() == PixelFormat.PIXEL_FORMAT_UNSPECIFIED ? PixelFormat.PIXEL_FORMAT_GRAY8 : s.getFormat();
        String problem = check(s, format, x, y, w, h, downscale, sensor);
        if (problem != null) {
            reject(ctx, "bad-subscribe", problem);
            return;
        }
        subscription = new Subscription(ctx.channel(), sensor.id(), format, x, y, w, h, downscale, s.getRateHz());
        publisher.add(subscription);
    }

    /** Returns what is wrong with the request (its defaults already resolved), or null. */
    private static String check(Subscribe s, PixelFormat format, int x, int y, int w, int h, int ds, SensorPipeline sensor) {
        if (!(s.getRateHz() >= 0 && s.getRateHz() <= 1000)) {
            return "rate_hz=" + s.getRateHz() + " outside [0, 1000]";
        }
        if (ds > 16) {
            return "downscale=" + ds + " > 16";
        }
        if (format != PixelFormat.PIXEL_FORMAT_GRAY8 && format != PixelFormat.PIXEL_FORMAT_LOG_F32) {
            return "format " + s.getFormatValue() + " unknown";
        }
        if (w < 1 || h < 1 || (long) x + w > sensor.width() || (long) y + h > sensor.height()) {
            return "region " + x + "," + y + " " + w + "x" + h + " outside the sensor's " + sensor.width() + "x" + sensor.height();
        }
        if (w / ds < 1 || h / ds < 1) {
            return "downscale=" + ds + " larger than the region " + w + "x" + h;
        }
        return null;
    }

    private void reject(ChannelHandlerContext ctx, String code, String message) {
        nodeCounters.increment(NodeCounter.SUBSCRIBERS_REJECTED);
        ErrorReplies.sendAndClose(ctx.channel(), code, message);
    }

    @Override
    public void channelInactive(ChannelHandlerContext ctx) throws Exception {
        if (subscription != null) {
            publisher.remove(subscription);
        }
        super.channelInactive(ctx);
    }

    @Override
    public void exceptionCaught(ChannelHandlerContext ctx, Throwable cause) {
        if (!(cause instanceof java.io.IOException)) {
            nodeCounters.increment(NodeCounter.INTERNAL_ERRORS);
        }
        ctx.close();
    }
}
