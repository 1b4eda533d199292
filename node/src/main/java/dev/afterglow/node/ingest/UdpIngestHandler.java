package dev.afterglow.node.ingest;

import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.pipeline.Transport;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SealedDatagram;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.SimpleChannelInboundHandler;
import io.netty.channel.socket.DatagramPacket;
import java.net.InetAddress;

/**
 * UDP ingest: one envelope per datagram, no length prefix. Event packets and sensor frames must
 * name their sensor, which must already be known (listed in the configuration, or introduced by a
 * TCP hello), since a datagram carries no geometry.
 *
 * <p>Who may send: a sensor with a token accepts only sealed datagrams ({@code SealedDatagram},
 * HMAC-SHA256 of the inner envelope keyed by the token, checked before the inner envelope is
 * parsed); a sensor without one accepts plain datagrams from the networks in its
 * {@code udp-from} list (loopback by default). Source addresses of UDP can be forged by anyone on
 * the path, so the allow-list only keeps out honest mistakes and remote strangers; the seal is
 * what authenticates. While a sensor is connected over TCP, its connection vouches for its
 * packets and plain datagrams for it are refused. Anything refused or malformed is counted and dropped; nothing is sent back.
 * Sequence numbers and times are checked on the sensor's pipeline thread. One I/O thread.
 */
public final class UdpIngestHandler extends SimpleChannelInboundHandler<DatagramPacket> {
    private final SensorRegistry registry;
    private final NodeClock clock;
    private final Counters nodeCounters;
    private final DatagramSeal seal = new DatagramSeal();

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
        InetAddress source = datagram.sender().getAddress();
        boolean sealed = false;
        if (envelope.getBodyCase() == Envelope.BodyCase.SEALED) {
            envelope = unseal(envelope.getSealed());
            if (envelope == null) {
                return;
            }
            sealed = true;
        }
        switch (envelope.getBodyCase()) {
            case EVENTS -> {
                SensorPipeline p = allowed(envelope.getEvents().getSensorId(), sealed, source);
                if (p != null) {
                    registry.inputOf(p).events(envelope, arrival, Transport.UDP);
                }
            }
            case SENSOR_FRAME -> {
                SensorPipeline p = allowed(envelope.getSensorFrame().getSensorId(), sealed, source);
                if (p != null) {
                    registry.inputOf(p).sensorFrame(envelope, arrival);
                }
            }
            default -> nodeCounters.increment(NodeCounter.PROTOCOL_ERRORS);
        }
    }

    /** The inner envelope of a sealed datagram whose tag checks out, or null (counted). */
    private Envelope unseal(SealedDatagram s) {
        SensorPipeline p = registry.get(s.getSensorId());
        if (p == null) {
            nodeCounters.increment(NodeCounter.UNKNOWN_SENSOR);
            return null;
        }
        SensorConfig c = p.config();
        if (!c.hasToken() || !seal.verifies(c.token, s.getEnvelope(), s.getHmacSha256())) {
            refuse(s.getSensorId(), c.hasToken() ? "a datagram with a wrong seal" : "a sealed datagram, but it has no token");
            return null;
        }
        Envelope inner;
        try {
            inner = Envelopes.parse(s.getEnvelope());
        } catch (InvalidProtocolBufferException e) {
            nodeCounters.increment(NodeCounter.MESSAGES_MALFORMED);
            return null;
        }
        String innerId = switch (inner.getBodyCase()) {
            case EVENTS -> inner.getEvents().getSensorId();
            case SENSOR_FRAME -> inner.getSensorFrame().getSensorId();
            default -> null;
        };
        if (!s.getSensorId().equals(innerId)) {
            nodeCounters.increment(NodeCounter.PROTOCOL_ERRORS);
            return null;
        }
        return inner;
    }

    /** The sensor's pipeline if this datagram may feed it, or null (counted). */
    private SensorPipeline allowed(String sensorId, boolean sealed, InetAddress source) {
        SensorPipeline p = registry.get(sensorId);
        if (p == null) {
            nodeCounters.increment(NodeCounter.UNKNOWN_SENSOR);
            return null;
        }
        if (sealed) {
            return p;
        }
        SensorConfig c = p.config();
        if (c.hasToken()) {
            refuse(sensorId, "an unsealed datagram, but it has a token");
            return null;
        }
        if (p.connected()) {
            // Its TCP connection vouches for its packets; a plain datagram could come from anyone.
            refuse(sensorId, "an unsealed datagram while it is connected over TCP");
            return null;
        }
        if (!c.udpSources().allows(source)) {
            refuse(sensorId, "a datagram from " + source.getHostAddress() + ", outside udp-from (" + c.udpSources() + ")");
            return null;
        }
        return p;
    }

    private void refuse(String sensorId, String what) {
        nodeCounters.increment(NodeCounter.UDP_REFUSED);
        OnceLog.warn("udp-refused:" + sensorId, "sensor " + sensorId + ": refused " + what, null);
    }

    @Override
    public void exceptionCaught(ChannelHandlerContext ctx, Throwable cause) {
        nodeCounters.increment(NodeCounter.INTERNAL_ERRORS);
        OnceLog.warn("udp:" + cause.getClass().getName(), "UDP ingest: unexpected error: " + cause, cause);
    }
}
