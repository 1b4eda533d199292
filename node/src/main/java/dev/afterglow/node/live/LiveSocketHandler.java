package dev.afterglow.node.live;

import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.SimpleChannelInboundHandler;
import io.netty.handler.codec.http.websocketx.CloseWebSocketFrame;
import io.netty.handler.codec.http.websocketx.TextWebSocketFrame;
import io.netty.handler.codec.http.websocketx.WebSocketCloseStatus;
import io.netty.handler.codec.http.websocketx.WebSocketFrame;
import io.netty.handler.codec.http.websocketx.WebSocketServerProtocolHandler;
import java.util.concurrent.ScheduledFuture;
import java.util.concurrent.TimeUnit;

/**
 * One live view WebSocket after the handshake: registers the viewer with its sensor's
 * {@link LiveTap} (which sends the binary frames from the pipeline thread) and sends a JSON stats
 * message ({@link LiveStats}) every {@value #STATS_PERIOD_MS} ms from this connection's I/O thread,
 * skipped while the connection is not writable. Messages from the page are ignored. Closing the
 * connection removes the viewer. One instance per connection.
 */
public final class LiveSocketHandler extends SimpleChannelInboundHandler<WebSocketFrame> {
    static final long STATS_PERIOD_MS = 500;

    private final LiveViews views;
    private LiveRequest request;
    private LiveViewer viewer;
    private LiveStats stats;
    private ScheduledFuture<?> statsTimer;

    public LiveSocketHandler(LiveViews views) {
        this.views = views;
    }

    @Override
    public void userEventTriggered(ChannelHandlerContext ctx, Object evt) throws Exception {
        if (!(evt instanceof WebSocketServerProtocolHandler.HandshakeComplete)) {
            super.userEventTriggered(ctx, evt);
            return;
        }
        request = ctx.channel().attr(LiveSocketGate.REQUEST).get();
        if (request == null) { // cannot happen: the gate checks every request on this path
            ctx.close();
            return;
        }
        viewer = views.attach(request.sensor(), ctx.channel(), request.fps());
        if (viewer == null) {
            ctx.writeAndFlush(new CloseWebSocketFrame(WebSocketCloseStatus.TRY_AGAIN_LATER,
                    "live view limit " + LiveViews.MAX_VIEWERS + " reached")).addListener(f -> ctx.close());
            return;
        }
        stats = new LiveStats(request.sensor(), request.fps(), views.clock());
        sendStats(ctx);
        statsTimer = ctx.executor().scheduleAtFixedRate(() -> sendStats(ctx), STATS_PERIOD_MS, STATS_PERIOD_MS,
                TimeUnit.MILLISECONDS);
    }

    private void sendStats(ChannelHandlerContext ctx) {
        if (ctx.channel().isActive() && ctx.channel().isWritable()) {
            ctx.writeAndFlush(new TextWebSocketFrame(stats.next()), ctx.voidPromise());
        }
    }

    @Override
    protected void channelRead0(ChannelHandlerContext ctx, WebSocketFrame frame) {
        // The page only listens.
    }

    @Override
    public void channelInactive(ChannelHandlerContext ctx) throws Exception {
        if (statsTimer != null) {
            statsTimer.cancel(false);
            statsTimer = null;
        }
        if (viewer != null) {
            views.detach(request.sensor(), viewer);
            viewer = null;
        }
        super.channelInactive(ctx);
    }

    @Override
    public void exceptionCaught(ChannelHandlerContext ctx, Throwable cause) {
        ctx.close();
    }
}
