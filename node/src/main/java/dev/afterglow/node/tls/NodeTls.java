package dev.afterglow.node.tls;

import dev.afterglow.node.config.TlsConfig;
import dev.afterglow.node.stats.Counters;
import io.netty.channel.Channel;
import io.netty.handler.ssl.SslContext;
import io.netty.handler.ssl.SslHandler;
import java.util.EnumSet;
import java.util.Set;
import java.util.function.Consumer;

/**
 * TLS on the node's TCP listeners. {@link #addTo} puts an {@code SslHandler} (and a
 * {@link HandshakeWatch} behind it) first in a new connection's pipeline when its listener is named
 * in {@code tls.listeners}, and does nothing otherwise or when TLS is off. A handshake that has not
 * completed within {@link #HANDSHAKE_TIMEOUT_MS} fails; failed handshakes close the connection, count
 * in {@code afterglow_tls_handshake_failures_total} and are logged once per {@link HandshakeFailure} kind.
 *
 * <pre>
 * protected void initChannel(SocketChannel ch) {
 *     tls.addTo(ch, TlsListener.INGEST);
 *     ch.pipeline().addLast(...);   // the listener's own handlers see plain bytes
 * }
 * </pre>
 */
public final class NodeTls {
    /** Time a client has for the handshake, from the connection's start (common practice: Netty's default). */
    public static final long HANDSHAKE_TIMEOUT_MS = 10_000;
    private static final System.Logger LOG = System.getLogger(NodeTls.class.getPackageName());

    private final SslContext context;
    private final Set<TlsListener> listeners;
    private final long handshakeTimeoutMs;
    private final HandshakeFailures failures;

    /**
     * @param context the server context, or null for TLS off
     * @param warn where the first failure of each kind is written
     */
    public NodeTls(SslContext context, Set<TlsListener> listeners, Counters counters, long handshakeTimeoutMs,
            Consumer<String> warn) {
        this.context = context;
        this.listeners = listeners.isEmpty() ? EnumSet.noneOf(TlsListener.class) : EnumSet.copyOf(listeners);
        this.handshakeTimeoutMs = handshakeTimeoutMs;
        this.failures = new HandshakeFailures(counters, warn);
    }

    /** TLS as configured (the context built when the configuration was validated); failures logged as warnings. */
    public static NodeTls of(TlsConfig config, Counters counters) {
        SslContext context = config.enabled() ? config.serverContext() : null;
        return new NodeTls(context, config.enabled() ? config.listenerSet() : Set.of(), counters, HANDSHAKE_TIMEOUT_MS,
                message -> LOG.log(System.Logger.Level.WARNING, message));
    }

    /** True when connections to this listener use TLS. */
    public boolean covers(TlsListener listener) {
        return context != null && listeners.contains(listener);
    }

    /** Puts TLS first in a new connection's pipeline if its listener is covered; call it first in {@code initChannel}. */
    public void addTo(Channel ch, TlsListener listener) {
        if (!covers(listener)) {
            return;
        }
        SslHandler ssl = context.newHandler(ch.alloc());
        ssl.setHandshakeTimeoutMillis(handshakeTimeoutMs);
        LingeringClose close = new LingeringClose();
        ch.pipeline().addFirst("tls-handshake-watch", new HandshakeWatch(listener, failures, close));
        ch.pipeline().addFirst("tls", ssl);
        ch.pipeline().addFirst("tls-lingering-close", close);
    }
}
