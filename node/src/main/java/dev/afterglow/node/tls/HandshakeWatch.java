package dev.afterglow.node.tls;

import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelInboundHandlerAdapter;
import io.netty.handler.ssl.SslHandshakeCompletionEvent;

/**
 * Sits right after the {@code SslHandler} of one connection until its handshake ends. A failed
 * handshake is recorded and the connection closed (staged by {@link LingeringClose}, so the client
 * reads the TLS alert); the exceptions the {@code SslHandler} raises
 * before the handshake succeeded are the same failure and go no further (the listener's own handlers
 * would otherwise count them as their errors). After a successful handshake it leaves the pipeline.
 * One instance per connection; runs on the connection's I/O thread.
 */
final class HandshakeWatch extends ChannelInboundHandlerAdapter {
    private final TlsListener listener;
    private final HandshakeFailures failures;
    private final LingeringClose close;
    private boolean failed;

    HandshakeWatch(TlsListener listener, HandshakeFailures failures, LingeringClose close) {
        this.listener = listener;
        this.failures = failures;
        this.close = close;
    }

    @Override
    public void userEventTriggered(ChannelHandlerContext ctx, Object evt) throws Exception {
        if (evt instanceof SslHandshakeCompletionEvent done) {
            if (done.isSuccess()) {
                ctx.pipeline().remove(this);
                ctx.fireUserEventTriggered(evt);
            } else if (!failed) {
                failed = true;
                close.arm();
                failures.record(listener, ctx.channel().remoteAddress(), done.cause());
                ctx.close();
            }
            return;
        }
        ctx.fireUserEventTriggered(evt);
    }

    @Override
    public void exceptionCaught(ChannelHandlerContext ctx, Throwable cause) {
        // Before the handshake succeeded every exception is the handshake's: the completion event
        // counts it (if the handshake has not failed yet, closing makes the SslHandler fail it).
        if (!failed) {
            ctx.close();
        }
    }
}
