package dev.afterglow.node.http;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import io.netty.channel.embedded.EmbeddedChannel;
import io.netty.handler.codec.http.DefaultFullHttpRequest;
import io.netty.handler.codec.http.FullHttpRequest;
import io.netty.handler.codec.http.FullHttpResponse;
import io.netty.handler.codec.http.HttpHeaderNames;
import io.netty.handler.codec.http.HttpMethod;
import io.netty.handler.codec.http.HttpVersion;
import java.util.List;
import org.junit.jupiter.api.Test;

class OriginCheckTest {
    private final Counters counters = new Counters();
    private final OriginCheck check = new OriginCheck(List.of("https://ops.example.org/"), counters);

    @Test
    void shouldAllowSameOriginListedOriginsAndRequestsWithoutOrigin() {
        // same origin = same scheme, host and port (RFC 6454 section 5); here the Host header stands for ours
        assertTrue(check.permitted("http://127.0.0.1:7380", "127.0.0.1:7380"));
        assertTrue(check.permitted("https://ops.example.org", "127.0.0.1:7380"));
        assertFalse(check.permitted("http://evil.example", "127.0.0.1:7380"));
        assertFalse(check.permitted("http://127.0.0.1:9999", "127.0.0.1:7380"));
        assertFalse(check.permitted("null", "127.0.0.1:7380"));
    }

    @Test
    void shouldAnswer403AndCountAForeignOrigin() {
        EmbeddedChannel ch = new EmbeddedChannel(check);
        FullHttpRequest foreign = new DefaultFullHttpRequest(HttpVersion.HTTP_1_1, HttpMethod.GET, "/live/ws?sensor=a");
        foreign.headers().set(HttpHeaderNames.HOST, "127.0.0.1:7380").set(HttpHeaderNames.ORIGIN, "http://evil.example");
        ch.writeInbound(foreign);
        FullHttpResponse r = ch.readOutbound();
        assertEquals(403, r.status().code());
        r.release();
        assertEquals(1, counters.get(NodeCounter.ORIGIN_REFUSED));
        assertEquals(0, foreign.refCnt(), "refused request released");

        EmbeddedChannel ok = new EmbeddedChannel(check);
        FullHttpRequest plain = new DefaultFullHttpRequest(HttpVersion.HTTP_1_1, HttpMethod.GET, "/metrics");
        ok.writeInbound(plain);
        FullHttpRequest passed = ok.readInbound();
        assertEquals("/metrics", passed.uri());
        passed.release();
    }
}
