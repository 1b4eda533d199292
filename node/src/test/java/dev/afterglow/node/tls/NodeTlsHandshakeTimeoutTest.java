package dev.afterglow.node.tls;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import io.netty.bootstrap.ServerBootstrap;
import io.netty.channel.Channel;
import io.netty.channel.ChannelInitializer;
import io.netty.channel.EventLoopGroup;
import io.netty.channel.MultiThreadIoEventLoopGroup;
import io.netty.channel.nio.NioIoHandler;
import io.netty.channel.socket.SocketChannel;
import io.netty.channel.socket.nio.NioServerSocketChannel;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.nio.file.Path;
import java.util.List;
import java.util.Set;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * A client that connects to a TLS port and says nothing is cut off after the handshake timeout,
 * counted, and logged once however often it happens. A short timeout on a bare listener keeps the
 * test fast; the node uses {@link NodeTls#HANDSHAKE_TIMEOUT_MS}.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS)
class NodeTlsHandshakeTimeoutTest {

    @Test
    void shouldCloseCountAndLogOnceWhenNoHandshakeArrives(@TempDir Path dir) throws Exception {
        TestPki pki = TestPki.create(dir);
        Counters counters = new Counters();
        List<String> warnings = new CopyOnWriteArrayList<>();
        long timeoutMs = 300;
        NodeTls tls = new NodeTls(TlsContexts.server(pki.serverCert, pki.serverKey, null), Set.of(TlsListener.INGEST),
                counters, timeoutMs, warnings::add);
        EventLoopGroup group = new MultiThreadIoEventLoopGroup(1, NioIoHandler.newFactory());
        try {
            Channel server = new ServerBootstrap().group(group).channel(NioServerSocketChannel.class)
                    .childHandler(new ChannelInitializer<SocketChannel>() {
                        @Override
                        protected void initChannel(SocketChannel ch) {
                            tls.addTo(ch, TlsListener.INGEST);
                        }
                    })
                    .bind(new InetSocketAddress("127.0.0.1", 0)).sync().channel();
            int port = ((InetSocketAddress) server.localAddress()).getPort();
            for (int i = 1; i <= 3; i++) {
                try (Socket silent = new Socket("127.0.0.1", port)) {
                    silent.setSoTimeout(10_000);
                    long start = System.nanoTime();
                    assertEquals(-1, silent.getInputStream().read(), "closed by the node, nothing sent");
                    long tookMs = TimeUnit.NANOSECONDS.toMillis(System.nanoTime() - start);
                    assertTrue(tookMs >= timeoutMs - 50, "closed after " + tookMs + " ms");
                }
                long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(5);
                while (counters.get(NodeCounter.TLS_HANDSHAKE_FAILURES) < i && System.nanoTime() < deadline) {
                    Thread.sleep(5);
                }
                assertEquals(i, counters.get(NodeCounter.TLS_HANDSHAKE_FAILURES));
            }
            assertEquals(1, warnings.size(), warnings.toString());
            assertTrue(warnings.get(0).contains(HandshakeFailure.TIMEOUT.description()), warnings.get(0));
            assertTrue(warnings.get(0).startsWith("TLS handshake failed on the ingest listener from /127.0.0.1:"), warnings.get(0));
            // Listeners not named get nothing.
            assertTrue(tls.covers(TlsListener.INGEST));
            assertTrue(!tls.covers(TlsListener.HTTP));
            server.close().sync();
        } finally {
            group.shutdownGracefully(0, 1, TimeUnit.SECONDS).awaitUninterruptibly(5, TimeUnit.SECONDS);
        }
    }
}
