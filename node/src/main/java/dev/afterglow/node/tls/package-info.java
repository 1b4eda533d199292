/**
 * TLS for the node's TCP listeners: PEM files read and checked once at start ({@link dev.afterglow.node.tls.Pem},
 * {@link dev.afterglow.node.tls.TlsContexts}), an {@code SslHandler} first in the pipeline of each
 * listener named in the configuration ({@link dev.afterglow.node.tls.NodeTls}), and failed handshakes
 * closed, counted and logged once per kind ({@link dev.afterglow.node.tls.HandshakeFailure}).
 */
package dev.afterglow.node.tls;
