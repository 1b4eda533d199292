package dev.afterglow.node.ingest;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.pipeline.Transport;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.SimpleChannelInboundHandler;
import io.netty.channel.socket.DatagramPacket;

/**
 * UDP ingest: one envelope per datagram, no length prefix. Event packets and sensor frames must
 * name their sensor, which must already be known (listed in the configuration, or introduced by a
 * TCP hello), since a datagram carries no geometry. Anything else is counted and dropped; nothing
 * is sent back. Sequence numbers are checked on the sensor's pipeline thread.
 */
public final class UdpIngestHandler extends SimpleChannelInboundHandler<DatagramPacket> {
    private final SensorRegistry registry;
    private final NodeClock clock;
    private final Counters nodeCounters;

    public UdpIngestHandler(SensorRegistry registry, NodeClock clock) {
        this.registry = registry;
        this.clock = clock;
        this.nodeCounters = registry.nodeCounters();
    }

    @Override
    protected void channelRead0(ChannelHandlerContext ctx, DatagramPacket datagram) {
        long arrival = clock.monotonicNanos();
        Envelope envelope;
        try {
            envelope = Envelopes.parse(datagram.content());
        } catch (InvalidProtocolBufferException e) {
            nodeCounters.increment(NodeCounter.MESSAGES_MALFORMED);
            return;
        }
        switch (envelope.getBodyCase()) {
            case EVENTS -> {
                SensorPipeline p = known(envelope.getEvents().getSensorId());
                if (p != null) {
                    p.offerPacket(envelope.getEvents(), arrival, Transport.UDP);
                }
            }
            case SENSOR_FRAME -> {
                SensorPipeline p = known(envelope.getSensorFrame().getSensorId());
                if (p != null) {
                    p.offerFrame(envelope.getSensorFrame());
                }
            }
            default -> nodeCounters.increment(NodeCounter.PROTOCOL_ERRORS);
        }
    }

    private SensorPipeline known(String sensorId) {
        SensorPipeline p = registry.get(sensorId);
        if (p == null) {
            nodeCounters.increment(NodeCounter.UNKNOWN_SENSOR);
        }
        return p;
    }

    @Override
    public void exceptionCaught(ChannelHandlerContext ctx, Throwable cause) {
        nodeCounters.increment(NodeCounter.INTERNAL_ERRORS);
    }
}
