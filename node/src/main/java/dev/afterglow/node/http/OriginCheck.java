package dev.afterglow.node.http;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import io.netty.buffer.Unpooled;
import io.netty.channel.ChannelFutureListener;
import io.netty.channel.ChannelHandler;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelInboundHandlerAdapter;
import io.netty.handler.codec.http.DefaultFullHttpResponse;
import io.netty.handler.codec.http.FullHttpRequest;
import io.netty.handler.codec.http.FullHttpResponse;
import io.netty.handler.codec.http.HttpHeaderNames;
import io.netty.handler.codec.http.HttpResponseStatus;
import io.netty.handler.codec.http.HttpVersion;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.stream.Collectors;

/**
 * Refuses browser requests sent from another web site. Browsers put an {@code Origin} header on
 * every WebSocket handshake and on cross-site requests (RFC 6454; RFC 6455 section 10.2 asks
 * servers to check it): a request whose {@code Origin} is neither the node's own address (the
 * {@code Host} it was asked under) nor in {@code access.allowed-origins} gets 403 and is counted.
 * Requests without an {@code Origin} (curl, Prometheus, the project's clients) pass: they do not
 * come from a web page, so they cannot be a page riding on an operator's browser. Shared, stateless.
 */
@ChannelHandler.Sharable
public final class OriginCheck extends ChannelInboundHandlerAdapter {
    private final Set<String> allowed;
    private final Counters nodeCounters;

    public OriginCheck(List<String> allowedOrigins, Counters nodeCounters) {
        this.allowed = allowedOrigins.stream().map(OriginCheck::normalise).collect(Collectors.toUnmodifiableSet());
        this.nodeCounters = nodeCounters;
    }

    @Override
    public void channelRead(ChannelHandlerContext ctx, Object msg) {
        if (msg instanceof FullHttpRequest request) {
            String origin = request.headers().get(HttpHeaderNames.ORIGIN);
            if (origin != null && !permitted(origin, request.headers().get(HttpHeaderNames.HOST))) {
                request.release();
                nodeCounters.increment(NodeCounter.ORIGIN_REFUSED);
                OnceLog.warn("origin", "HTTP request with Origin " + printable(origin) + " refused", null);
                FullHttpResponse r = new DefaultFullHttpResponse(HttpVersion.HTTP_1_1, HttpResponseStatus.FORBIDDEN,
                        Unpooled.copiedBuffer("origin not allowed; add it to access.allowed-origins\n", StandardCharsets.UTF_8));
                r.headers().set(HttpHeaderNames.CONTENT_TYPE, "text/plain; charset=utf-8");
                r.headers().setInt(HttpHeaderNames.CONTENT_LENGTH, r.content().readableBytes());
                r.headers().set(HttpHeaderNames.CONNECTION, "close");
                ctx.writeAndFlush(r).addListener(ChannelFutureListener.CLOSE);
                return;
            }
        }
        ctx.fireChannelRead(msg);
    }

    /** True if a request with this {@code Origin}, sent to {@code host}, may go on. */
    boolean permitted(String origin, String host) {
        String o = normalise(origin);
        if (allowed.contains(o)) {
            return true;
        }
        try {
            URI u = new URI(o);
            String authority = u.getRawAuthority();
            return authority != null && host != null && authority.equalsIgnoreCase(host.strip())
                    && ("http".equals(u.getScheme()) || "https".equals(u.getScheme()));
        } catch (java.net.URISyntaxException e) {
            return false;
        }
    }

    private static String normalise(String origin) {
        String o = origin.strip().toLowerCase(Locale.ROOT);
        return o.endsWith("/") ? o.substring(0, o.length() - 1) : o;
    }

    private static String printable(String s) {
        String cut = s.length() > 80 ? s.substring(0, 80) + "..." : s;
        return cut.replaceAll("[^\\x20-\\x7e]", "?");
    }
}
