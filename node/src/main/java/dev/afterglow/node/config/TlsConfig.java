package dev.afterglow.node.config;

import dev.afterglow.node.tls.TlsContexts;
import dev.afterglow.node.tls.TlsListener;
import io.netty.handler.ssl.SslContext;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.EnumSet;
import java.util.List;
import java.util.Set;

/**
 * TLS for the TCP listeners (sensor ingest, subscribers, HTTP): off unless {@code cert-file} and
 * {@code key-file} name PEM files. With {@code client-ca-file}, clients must present a certificate
 * signed by that CA. UDP ingest is not covered by TLS; it is authenticated per datagram instead
 * (sealed datagrams, see {@code SealedDatagram} in the schema).
 *
 * <pre>
 * tls:
 *   cert-file: /etc/afterglow/node.crt       # PEM: the node's certificate, then any intermediates
 *   key-file: /etc/afterglow/node.key        # PEM: its private key, PKCS#8 ("BEGIN PRIVATE KEY"), RSA or EC, unencrypted
 *   client-ca-file: /etc/afterglow/clients-ca.crt   # optional: PEM CA certificates; clients must then present a certificate
 *   listeners: [ingest, subscribers, http]
 * </pre>
 *
 * <p>{@link #validate()} reads the files and builds the server's TLS context once, so a missing
 * file, a bad PEM block, a key that does not belong to the certificate or an expired certificate
 * stops the node at start with a message naming the setting and the file.
 */
public final class TlsConfig {
    /** Server certificate chain, PEM. Empty: TLS off. */
    public String certFile = "";
    /** Private key of the certificate, PEM, unencrypted PKCS#8 ({@code BEGIN PRIVATE KEY}), RSA or EC. */
    public String keyFile = "";
    /** CA certificates (PEM) that client certificates must chain to; empty: no client certificates asked. */
    public String clientCaFile = "";
    /** Which listeners use TLS when it is on: any of {@code ingest}, {@code subscribers}, {@code http}. */
    public List<String> listeners = new ArrayList<>(List.of("ingest", "subscribers", "http"));

    // Built by validate(); not a configuration key.
    private SslContext serverContext;
    private Set<TlsListener> listenerSet = EnumSet.noneOf(TlsListener.class);

    /** True when a certificate and key are configured. */
    public boolean enabled() {
        return certFile != null && !certFile.isBlank();
    }

    /** The server's TLS context (TLS must be enabled); built at validation, or now if this object was never validated. */
    public SslContext serverContext() {
        if (!enabled()) {
            throw new IllegalStateException("TLS is off (tls.cert-file is empty)");
        }
        if (serverContext == null) {
            validate();
        }
        return serverContext;
    }

    /** The listeners named in {@link #listeners}, as validated. */
    public Set<TlsListener> listenerSet() {
        if (serverContext == null && enabled()) {
            validate();
        }
        return listenerSet.isEmpty() ? EnumSet.noneOf(TlsListener.class) : EnumSet.copyOf(listenerSet);
    }

    void validate() {
        certFile = certFile == null ? "" : certFile.strip();
        keyFile = keyFile == null ? "" : keyFile.strip();
        clientCaFile = clientCaFile == null ? "" : clientCaFile.strip();
        if (listeners == null) {
            throw new ConfigException("tls.listeners must not be null (list any of " + TlsListener.names() + ")");
        }
        Set<TlsListener> named = EnumSet.noneOf(TlsListener.class);
        for (int i = 0; i < listeners.size(); i++) {
            String name = listeners.get(i);
            TlsListener l = TlsListener.byName(name);
            if (l == null) {
                throw new ConfigException("tls.listeners[" + i + "]=" + name + ": expected " + TlsListener.names());
            }
            if (!named.add(l)) {
                throw new ConfigException("tls.listeners[" + i + "]=" + name + " is listed twice");
            }
        }
        serverContext = null;
        listenerSet = named;
        if (!enabled()) {
            if (!keyFile.isEmpty()) {
                throw new ConfigException("tls.key-file=" + keyFile + " is set but tls.cert-file is empty");
            }
            if (!clientCaFile.isEmpty()) {
                throw new ConfigException("tls.client-ca-file=" + clientCaFile + " is set but tls.cert-file is empty");
            }
            return;
        }
        if (keyFile.isEmpty()) {
            throw new ConfigException("tls.key-file is required when tls.cert-file is set");
        }
        if (named.isEmpty()) {
            throw new ConfigException("tls.listeners is empty while tls.cert-file is set: name any of " + TlsListener.names()
                    + ", or leave tls.cert-file empty for no TLS");
        }
        serverContext = TlsContexts.server(Path.of(certFile), Path.of(keyFile),
                clientCaFile.isEmpty() ? null : Path.of(clientCaFile));
    }
}
