package dev.afterglow.node.http;

import dev.afterglow.node.guard.ConnectionGuard;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelInboundHandlerAdapter;

/**
 * Sits after the HTTP aggregator and tells the connection's {@link ConnectionGuard} that a whole
 * request (or, after a WebSocket upgrade, a whole frame) has arrived, so the request timeout only
 * bites while one is incomplete. One instance per connection.
 */
public final class MessageMark extends ChannelInboundHandlerAdapter {
    private final ConnectionGuard guard;

    public MessageMark(ConnectionGuard guard) {
        this.guard = guard;
    }

    @Override
    public void channelRead(ChannelHandlerContext ctx, Object msg) {
        guard.messageComplete(false);
        ctx.fireChannelRead(msg);
    }
}
