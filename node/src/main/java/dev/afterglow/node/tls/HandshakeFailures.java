package dev.afterglow.node.tls;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import java.net.SocketAddress;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.Consumer;

/**
 * Counts failed handshakes in {@link NodeCounter#TLS_HANDSHAKE_FAILURES} and logs the first of each
 * {@link HandshakeFailure} kind, so a scanner or a misconfigured client cannot flood the log.
 * Thread-safe: called from any I/O thread.
 */
final class HandshakeFailures {
    private final Counters counters;
    private final Consumer<String> warn;
    private final AtomicInteger loggedKinds = new AtomicInteger();

    HandshakeFailures(Counters counters, Consumer<String> warn) {
        this.counters = counters;
        this.warn = warn;
    }

    void record(TlsListener listener, SocketAddress remote, Throwable cause) {
        HandshakeFailure kind = HandshakeFailure.of(cause);
        int bit = 1 << kind.ordinal();
        int before = loggedKinds.getAndUpdate(v -> v | bit);
        if ((before & bit) == 0) {
            warn.accept("TLS handshake failed on the " + listener.configName() + " listener from " + remote + ": "
                    + kind.description() + " [" + summary(kind, cause) + "]; further failures of this kind are only counted"
                    + " (afterglow_tls_handshake_failures_total)");
        }
        // Counted after the log line, so whoever sees the count also finds the line.
        counters.increment(NodeCounter.TLS_HANDSHAKE_FAILURES);
    }

    /**
     * The innermost cause's class and message, one line, bounded. Messages name certificates and
     * alerts, never keys; what a plain-text client sent (Netty quotes it in hex) is left out, since
     * it may hold a token.
     */
    private static String summary(HandshakeFailure kind, Throwable cause) {
        Throwable root = cause;
        while (root.getCause() != null && root.getCause() != root) {
            root = root.getCause();
        }
        String message = kind == HandshakeFailure.NOT_TLS || root.getMessage() == null ? "" : ": " + root.getMessage();
        String text = (root.getClass().getSimpleName() + message).replaceAll("\\s+", " ")
                .replaceAll("[0-9a-fA-F]{32,}", "<bytes not shown>");
        return text.length() > 300 ? text.substring(0, 300) + "..." : text;
    }
}
