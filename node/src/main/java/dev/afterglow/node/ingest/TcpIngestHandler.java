package dev.afterglow.node.ingest;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorInput;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.pipeline.Transport;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import io.netty.buffer.ByteBuf;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.SimpleChannelInboundHandler;
import io.netty.handler.codec.CorruptedFrameException;
import io.netty.handler.codec.DecoderException;
import io.netty.handler.codec.TooLongFrameException;
import java.io.IOException;

/**
 * One sensor's TCP connection, after the length-prefix decoder: the first envelope must be a
 * hello, then event packets and sensor frames follow. Envelopes that do not parse are counted
 * and skipped (the length prefix keeps the stream in step); an oversized or corrupt length prefix
 * is counted, answered with an error report, and the connection closed. Runs on the connection's
 * I/O thread; packets are handed to the sensor's pipeline thread.
 */
public final class TcpIngestHandler extends SimpleChannelInboundHandler<ByteBuf> {
    private final SensorRegistry registry;
    private final NodeClock clock;
    private final Counters nodeCounters;
    private final Runnable onMessage;
    private SensorPipeline sensor;
    /** Where this sensor's messages go: its pipeline, or an edge's forwarder in front of it. */
    private SensorInput input;

    /**
     * @param onMessage called for every whole message (connection timeouts)
     */
    public TcpIngestHandler(SensorRegistry registry, NodeClock clock, Runnable onMessage) {
        this.registry = registry;
        this.clock = clock;
        this.nodeCounters = registry.nodeCounters();
        this.onMessage = onMessage;
    }

    @Override
    protected void channelRead0(ChannelHandlerContext ctx, ByteBuf msg) {
        long arrival = clock.monotonicNanos();
        onMessage.run();
        Envelope envelope;
        try {
            envelope = Envelopes.parse(msg);
        } catch (InvalidProtocolBufferException e) {
            nodeCounters.increment(NodeCounter.MESSAGES_MALFORMED);
            return;
        }
        switch (envelope.getBodyCase()) {
            case HELLO -> onHello(ctx, envelope);
            case EVENTS -> {
                if (sensor == null) {
                    protocolError(ctx, "events before hello");
                } else {
                    input.events(envelope, arrival, Transport.TCP);
                }
            }
            case SENSOR_FRAME -> {
                if (sensor == null) {
                    protocolError(ctx, "sensor frame before hello");
                } else {
                    input.sensorFrame(envelope, arrival);
                }
            }
            default -> protocolError(ctx, "unexpected " + envelope.getBodyCase() + " on an ingest connection");
        }
    }

    private void onHello(ChannelHandlerContext ctx, Envelope envelope) {
        if (sensor != null) {
            protocolError(ctx, "second hello on one connection");
            return;
        }
        if (envelope.getSchemaVersion() != Envelopes.SCHEMA_VERSION) {
            nodeCounters.increment(NodeCounter.PROTOCOL_ERRORS);
            ErrorReplies.sendAndClose(ctx.channel(), "schema-version", "schema_version " + envelope.getSchemaVersion()
                    + " not supported; this node speaks " + Envelopes.SCHEMA_VERSION);
            return;
        }
        SensorRegistry.Attach attach = registry.attach(envelope.getHello(), ctx.channel());
        if (attach.pipeline() == null) {
            ErrorReplies.sendAndClose(ctx.channel(), attach.errorCode(), attach.message());
            return;
        }
        sensor = attach.pipeline();
        input = attach.input();
        input.hello(envelope.getHello(), clock.monotonicNanos());
    }

    private void protocolError(ChannelHandlerContext ctx, String what) {
        nodeCounters.increment(NodeCounter.PROTOCOL_ERRORS);
        ErrorReplies.sendAndClose(ctx.channel(), "protocol", what);
    }

    @Override
    public void channelInactive(ChannelHandlerContext ctx) throws Exception {
        if (sensor != null) {
            registry.detach(sensor.id(), ctx.channel());
        }
        super.channelInactive(ctx);
    }

    @Override
    public void exceptionCaught(ChannelHandlerContext ctx, Throwable cause) {
        Throwable c = cause instanceof DecoderException && cause.getCause() != null ? cause.getCause() : cause;
        if (c instanceof TooLongFrameException) {
            nodeCounters.increment(NodeCounter.MESSAGES_OVERSIZED);
            ErrorReplies.sendAndClose(ctx.channel(), "oversized", c.getMessage());
        } else if (c instanceof CorruptedFrameException) {
            nodeCounters.increment(NodeCounter.MESSAGES_MALFORMED);
            ErrorReplies.sendAndClose(ctx.channel(), "malformed", c.getMessage());
        } else if (c instanceof IOException) {
            ctx.close(); // peer reset or vanished: nothing to tell it
        } else {
            nodeCounters.increment(NodeCounter.INTERNAL_ERRORS);
            OnceLog.warn("ingest:" + c.getClass().getName(), "ingest connection from " + ctx.channel().remoteAddress()
                    + " closed after an unexpected error: " + c, c);
            ctx.close();
        }
    }
}
