package dev.afterglow.node.publish;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.node.ingest.ErrorReplies;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.Subscribe;
import io.netty.buffer.ByteBuf;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.SimpleChannelInboundHandler;

/**
 * A subscriber's connection: the first envelope must be a valid {@link Subscribe} for a known
 * sensor ({@link SubscribeRequest}), with a token when the node lists subscriber tokens; the node
 * then writes intensity frames until either side closes. A bad request is answered with an error
 * report and the connection closed. Disconnecting removes the subscription.
 */
public final class SubscriberHandler extends SimpleChannelInboundHandler<ByteBuf> {
    private final SensorRegistry registry;
    private final FramePublisher publisher;
    private final int maxSubscribers;
    private final Counters nodeCounters;
    private final SubscriberAccess access;
    private final Runnable onMessage;
    private Subscription subscription;

    /**
     * @param onMessage called for every whole message (connection timeouts)
     */
    public SubscriberHandler(SensorRegistry registry, FramePublisher publisher, int maxSubscribers,
            SubscriberAccess access, Runnable onMessage) {
        this.registry = registry;
        this.publisher = publisher;
        this.maxSubscribers = maxSubscribers;
        this.nodeCounters = registry.nodeCounters();
        this.access = access;
        this.onMessage = onMessage;
    }

    @Override
    protected void channelRead0(ChannelHandlerContext ctx, ByteBuf msg) {
        onMessage.run();
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
        String refused = access.check(s.getToken(), s.getSensorId());
        if (refused != null) {
            nodeCounters.increment(NodeCounter.AUTH_REFUSED);
            OnceLog.warn("auth-subscriber", "subscriber from " + ctx.channel().remoteAddress()
                    + " refused: " + refused, null);
            reject(ctx, "unauthorized", refused);
            return;
        }
        SensorPipeline sensor = registry.get(s.getSensorId());
        if (sensor == null) {
            reject(ctx, "unknown-sensor", "no sensor " + s.getSensorId() + " (it must be listed or have connected)");
            return;
        }
        if (publisher.count() >= maxSubscribers) {
            reject(ctx, "limit", "subscriber limit " + maxSubscribers + " reached");
            return;
        }
        SubscribeRequest.Outcome outcome = SubscribeRequest.resolve(s, sensor.width(), sensor.height());
        if (outcome.problem() != null) {
            reject(ctx, "bad-subscribe", outcome.problem());
            return;
        }
        SubscribeRequest r = outcome.request();
        subscription = new Subscription(ctx.channel(), sensor.id(), r.format(), r.x(), r.y(), r.width(), r.height(),
                r.downscale(), r.rateHz());
        publisher.add(subscription);
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
        Throwable c = cause instanceof io.netty.handler.codec.DecoderException && cause.getCause() != null ? cause.getCause() : cause;
        if (c instanceof io.netty.handler.codec.TooLongFrameException || c instanceof io.netty.handler.codec.CorruptedFrameException) {
            reject(ctx, "oversized", c.getMessage());
            return;
        }
        if (!(c instanceof java.io.IOException)) {
            nodeCounters.increment(NodeCounter.SUBSCRIBER_FAILURES);
            OnceLog.warn("subscriber:" + c.getClass().getName(), "subscriber " + ctx.channel().remoteAddress()
                    + " dropped after an unexpected error: " + c, c);
        }
        ctx.close();
    }
}
