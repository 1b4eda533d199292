package dev.afterglow.node.guard;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import io.netty.channel.Channel;
import io.netty.channel.ChannelHandler;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelInboundHandlerAdapter;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.Consumer;

/**
 * Caps the connections one remote address holds on one listener. A connection over the cap is
 * counted ({@code connections refused}), logged once per address, given {@code refuse} to say why
 * (an error report, an HTTP 503) and closed. One instance per listener, shared by its connections.
 */
@ChannelHandler.Sharable
public final class ConnectionLimiter extends ChannelInboundHandlerAdapter {
    private final String listener;
    private final int maxPerAddress;
    private final Counters nodeCounters;
    private final Consumer<Channel> refuse;
    private final Map<InetAddress, AtomicInteger> open = new ConcurrentHashMap<>();

    /**
     * @param refuse tells the peer why and closes the channel
     */
    public ConnectionLimiter(String listener, int maxPerAddress, Counters nodeCounters, Consumer<Channel> refuse) {
        this.listener = listener;
        this.maxPerAddress = maxPerAddress;
        this.nodeCounters = nodeCounters;
        this.refuse = refuse;
    }

    @Override
    public void channelActive(ChannelHandlerContext ctx) throws Exception {
        InetAddress address = address(ctx.channel());
        AtomicInteger n = open.computeIfAbsent(address, a -> new AtomicInteger());
        if (n.incrementAndGet() > maxPerAddress) {
            n.decrementAndGet();
            ctx.channel().attr(REFUSED).set(Boolean.TRUE);
            nodeCounters.increment(NodeCounter.CONNECTIONS_REFUSED);
            OnceLog.warn("limit:" + listener, listener + ": connection from " + address
                    + " refused: more than " + maxPerAddress + " from one address", null);
            refuse.accept(ctx.channel());
            return;
        }
        super.channelActive(ctx);
    }

    @Override
    public void channelInactive(ChannelHandlerContext ctx) throws Exception {
        if (ctx.channel().attr(REFUSED).get() == null) {
            InetAddress address = address(ctx.channel());
            open.computeIfPresent(address, (a, n) -> n.decrementAndGet() <= 0 ? null : n);
            super.channelInactive(ctx);
        }
    }

    @Override
    public void channelRead(ChannelHandlerContext ctx, Object msg) {
        if (ctx.channel().attr(REFUSED).get() != null) {
            io.netty.util.ReferenceCountUtil.release(msg); // refused: nothing it sends is read
            return;
        }
        ctx.fireChannelRead(msg);
    }

    /** Connections currently counted for {@code address}. */
    public int openFrom(InetAddress address) {
        AtomicInteger n = open.get(address);
        return n == null ? 0 : n.get();
    }

    private static final io.netty.util.AttributeKey<Boolean> REFUSED = io.netty.util.AttributeKey.valueOf("afterglow.refused");

    private static InetAddress address(Channel ch) {
        return ch.remoteAddress() instanceof InetSocketAddress a ? a.getAddress() : InetAddress.getLoopbackAddress();
    }
}
