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
import java.util.ArrayDeque;

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
    /** Non-null while reading is paused for backpressure: messages decoded after the pause, in order. */
    private ArrayDeque<Envelope> held;

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
                } else if (held != null) {
                    held.add(envelope); // paused: in order, after what waits already
                } else {
                    input.events(envelope, arrival, Transport.TCP);
                    pauseIfBacklogged(ctx);
                }
            }
            case SENSOR_FRAME -> {
                if (sensor == null) {
                    protocolError(ctx, "sensor frame before hello");
                } else if (held != null) {
                    held.add(envelope);
                } else {
                    input.sensorFrame(envelope, arrival);
                }
            }
            default -> protocolError(ctx, "unexpected " + envelope.getBodyCase() + " on an ingest connection");
        }
    }

    /**
     * A sensor set to {@code overload: backpressure} whose queue is half taken: stop reading its
     * connection (TCP then holds the sender back) until the packets queued so far are handled.
     */
    private void pauseIfBacklogged(ChannelHandlerContext ctx) {
        if (sensor.config().backpressure() && sensor.backlogged()) {
            pause(ctx);
        }
    }

    /**
     * Stops reading. Messages already read and decoded (at most one read's worth: Netty stops its
     * read loop once auto-read is off) wait here, in order, and go first when the queue has drained.
     */
    private void pause(ChannelHandlerContext ctx) {
        if (held == null) {
            held = new ArrayDeque<>();
            sensor.counters().increment(NodeCounter.BACKPRESSURE_PAUSES);
        }
        ctx.channel().config().setAutoRead(false);
        sensor.afterQueued(() -> ctx.executor().execute(() -> resume(ctx)));
    }

    /** The queue drained: hand over what waits here, then read on (or pause again if it fills). On the connection's thread. */
    private void resume(ChannelHandlerContext ctx) {
        if (held == null || !ctx.channel().isActive()) {
            return;
        }
        while (!held.isEmpty()) {
            if (sensor.backlogged()) {
                sensor.afterQueued(() -> ctx.executor().execute(() -> resume(ctx)));
                return;
            }
            Envelope e = held.poll();
            // Counted from now: the wait here was the node's own pause, not the sensor's lateness.
            long now = clock.monotonicNanos();
            if (e.getBodyCase() == Envelope.BodyCase.EVENTS) {
                input.events(e, now, Transport.TCP);
            } else {
                input.sensorFrame(e, now);
            }
        }
        held = null;
        ctx.channel().config().setAutoRead(true);
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
