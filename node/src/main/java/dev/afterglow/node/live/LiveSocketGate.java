package dev.afterglow.node.live;

import io.netty.buffer.Unpooled;
import io.netty.channel.ChannelFutureListener;
import io.netty.channel.ChannelHandler;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelInboundHandlerAdapter;
import io.netty.handler.codec.http.DefaultFullHttpResponse;
import io.netty.handler.codec.http.FullHttpRequest;
import io.netty.handler.codec.http.FullHttpResponse;
import io.netty.handler.codec.http.HttpHeaderNames;
import io.netty.handler.codec.http.HttpHeaderValues;
import io.netty.handler.codec.http.HttpResponseStatus;
import io.netty.handler.codec.http.HttpVersion;
import io.netty.handler.codec.http.QueryStringDecoder;
import io.netty.handler.codec.http.websocketx.WebSocketServerProtocolConfig;
import io.netty.util.AttributeKey;
import java.nio.charset.StandardCharsets;

/**
 * Checks a live view WebSocket request before the upgrade: a missing sensor or a bad {@code fps}
 * is answered 400, an unknown sensor 404, too many viewers 503, each with a plain-text message,
 * and the connection is closed. A good request goes on to Netty's WebSocket handshake with the
 * checked request attached to the channel. Requests for other paths pass through untouched.
 * Stateless, shared by all connections.
 */
@ChannelHandler.Sharable
public final class LiveSocketGate extends ChannelInboundHandlerAdapter {
    static final AttributeKey<LiveRequest> REQUEST = AttributeKey.valueOf("afterglow.live.request");

    private final LiveViews views;

    public LiveSocketGate(LiveViews views) {
        this.views = views;
    }

    /** Configuration of the WebSocket handler that follows this gate. */
    public static WebSocketServerProtocolConfig protocolConfig() {
        return WebSocketServerProtocolConfig.newBuilder()
                .websocketPath(LiveViews.SOCKET_PATH)
                .checkStartsWith(true) // the path carries a query
                .maxFramePayloadLength(4096) // the page sends nothing but control frames
                .handleCloseFrames(true)
                .build();
    }

    @Override
    public void channelRead(ChannelHandlerContext ctx, Object msg) {
        if (!(msg instanceof FullHttpRequest request)
                || !LiveViews.SOCKET_PATH.equals(new QueryStringDecoder(request.uri()).path())) {
            ctx.fireChannelRead(msg);
            return;
        }
        LiveRequest.Check check = LiveRequest.parse(request.uri(), views);
        if (check.request() == null) {
            request.release();
            refuse(ctx, HttpResponseStatus.valueOf(check.status()), check.message());
            return;
        }
        if (views.count() >= LiveViews.MAX_VIEWERS) {
            request.release();
            refuse(ctx, HttpResponseStatus.SERVICE_UNAVAILABLE, "live view limit " + LiveViews.MAX_VIEWERS + " reached");
            return;
        }
        ctx.channel().attr(REQUEST).set(check.request());
        ctx.fireChannelRead(request);
    }

    private static void refuse(ChannelHandlerContext ctx, HttpResponseStatus status, String message) {
        FullHttpResponse r = new DefaultFullHttpResponse(HttpVersion.HTTP_1_1, status,
                Unpooled.copiedBuffer(message + "\n", StandardCharsets.UTF_8));
        r.headers().set(HttpHeaderNames.CONTENT_TYPE, "text/plain; charset=utf-8");
        r.headers().setInt(HttpHeaderNames.CONTENT_LENGTH, r.content().readableBytes());
        r.headers().set(HttpHeaderNames.CONNECTION, HttpHeaderValues.CLOSE);
        ctx.writeAndFlush(r).addListener(ChannelFutureListener.CLOSE);
    }
}
