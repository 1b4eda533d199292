package dev.afterglow.node.tls;

import io.netty.channel.ChannelDuplexHandler;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelPromise;
import io.netty.channel.socket.SocketChannel;
import io.netty.util.ReferenceCountUtil;
import java.util.concurrent.TimeUnit;

/**
 * First in a TLS connection's pipeline, before the {@code SslHandler}: once {@link #arm armed} by a
 * failed handshake, it turns the close that follows into a staged one. The node's output is shut
 * down right after the TLS alert (the client reads the alert, then end of stream), whatever the
 * client still sends is read and dropped, and the connection is closed when the client closes or
 * after {@link #LINGER_MS}. Closing at once would make the kernel answer the client's in-flight bytes
 * with a reset, which can discard the alert before the client reads it (with TLS 1.3 a client
 * writes its first request right after its side of the handshake, before the node has judged its
 * certificate). A staged close is common practice for servers that close with a reply the client
 * must see (RFC 9112, section 9.6). One instance per connection; runs on its I/O thread.
 */
final class LingeringClose extends ChannelDuplexHandler {
    /** Longest time a refused connection stays half-open. */
    static final long LINGER_MS = 1_000;

    private boolean armed;
    private boolean lingering;

    /** The next close is staged, and input from now on is dropped. */
    void arm() {
        armed = true;
    }

    @Override
    public void channelRead(ChannelHandlerContext ctx, Object msg) {
        if (armed) {
            ReferenceCountUtil.release(msg);
            return;
        }
        ctx.fireChannelRead(msg);
    }

    @Override
    public void close(ChannelHandlerContext ctx, ChannelPromise promise) {
        if (!armed || !(ctx.channel() instanceof SocketChannel ch) || !ch.isActive()) {
            ctx.close(promise);
            return;
        }
        ch.closeFuture().addListener(f -> promise.trySuccess());
        if (lingering) {
            return;
        }
        lingering = true;
        ctx.flush();
        ch.shutdownOutput();
        // The client's end of stream closes the channel at once (no half-closure allowed); this is the limit.
        ctx.executor().schedule(() -> ctx.close(), LINGER_MS, TimeUnit.MILLISECONDS);
    }
}
