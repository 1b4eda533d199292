package dev.afterglow.node.client;

import dev.afterglow.node.tls.Pem;
import dev.afterglow.node.tls.TlsContexts;
import java.io.IOException;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.nio.file.Path;
import java.security.GeneralSecurityException;
import java.security.KeyStore;
import java.security.PrivateKey;
import java.security.Principal;
import java.security.cert.X509Certificate;
import java.util.Arrays;
import java.util.List;
import javax.net.ssl.KeyManager;
import javax.net.ssl.SSLContext;
import javax.net.ssl.SSLHandshakeException;
import javax.net.ssl.SSLParameters;
import javax.net.ssl.SSLSocket;
import javax.net.ssl.SSLEngine;
import javax.net.ssl.TrustManagerFactory;
import javax.net.ssl.X509ExtendedKeyManager;

/**
 * TLS settings for the Java clients: the CA certificates (PEM) the node's certificate must chain to,
 * and optionally a client certificate with its key (PEM, key in PKCS#8) for a node that asks for
 * one ({@code tls.client-ca-file}). The node's certificate must name the host the client connects
 * to (a DNS or IP subject alternative name), as HTTPS clients check it (RFC 2818, RFC 6125).
 *
 * <pre>
 * ClientTls tls = ClientTls.trusting(Path.of("ca.crt"))
 *         .withClientCertificate(Path.of("client.crt"), Path.of("client.key"));
 * try (SensorClient c = SensorClient.connect("127.0.0.1", 7301, "dock-cam", 640, 480, false, tls)) { ... }
 * </pre>
 *
 * <p>With TLS 1.3 the node checks a client certificate after the client considers the handshake
 * done, so a refused client certificate shows as an {@code SSLException} ("Received fatal alert:
 * ...") at the client's next read, or as a closed connection at a later write.
 */
public final class ClientTls {
    private static final int CONNECT_TIMEOUT_MS = 5_000;
    private static final int HANDSHAKE_TIMEOUT_MS = 10_000;

    private final List<X509Certificate> trusted;
    private final List<X509Certificate> clientChain;
    private final PrivateKey clientKey;
    private final SSLContext context;

    private ClientTls(List<X509Certificate> trusted, List<X509Certificate> clientChain, PrivateKey clientKey) {
        this.trusted = trusted;
        this.clientChain = clientChain;
        this.clientKey = clientKey;
        this.context = context(trusted, clientChain, clientKey);
    }

    /**
     * Trusts the CA certificates in a PEM file, and only those.
     *
     * @throws dev.afterglow.node.config.ConfigException if the file is missing or holds no certificate
     */
    public static ClientTls trusting(Path caFile) {
        return new ClientTls(Pem.certificates(caFile, "--tls-ca"), null, null);
    }

    /** The same trust, presenting this certificate chain (PEM, leaf first) and its PKCS#8 key (PEM). */
    public ClientTls withClientCertificate(Path certFile, Path keyFile) {
        List<X509Certificate> chain = Pem.certificates(certFile, "--tls-cert");
        PrivateKey key = Pem.privateKey(keyFile, "--tls-key");
        TlsContexts.checkKeyMatches(chain.get(0), key, "--tls-cert=" + certFile, "--tls-key=" + keyFile);
        return new ClientTls(trusted, chain, key);
    }

    /** True when a client certificate is presented. */
    public boolean presentsCertificate() {
        return clientKey != null;
    }

    /**
     * Opens a TCP connection, with TLS when {@code tls} is not null: connects, completes the
     * handshake (checking the node's certificate and host name) and returns the socket.
     *
     * @throws SSLHandshakeException naming the host and port if the handshake fails
     */
    public static Socket open(String host, int port, ClientTls tls) throws IOException {
        Socket raw = new Socket();
        try {
            raw.setTcpNoDelay(true);
            raw.connect(new InetSocketAddress(host, port), CONNECT_TIMEOUT_MS);
            return tls == null ? raw : tls.handshake(raw, host, port);
        } catch (IOException | RuntimeException e) {
            raw.close();
            throw e;
        }
    }

    private SSLSocket handshake(Socket raw, String host, int port) throws IOException {
        SSLSocket s = (SSLSocket) context.getSocketFactory().createSocket(raw, host, port, true);
        SSLParameters p = s.getSSLParameters();
        p.setProtocols(TlsContexts.PROTOCOLS);
        p.setEndpointIdentificationAlgorithm("HTTPS"); // check that the certificate names the host
        s.setSSLParameters(p);
        int before = raw.getSoTimeout();
        raw.setSoTimeout(HANDSHAKE_TIMEOUT_MS);
        try {
            s.startHandshake();
        } catch (javax.net.ssl.SSLException e) {
            SSLHandshakeException named = new SSLHandshakeException("TLS handshake with " + host + ":" + port + " failed: " + e.getMessage());
            named.initCause(e);
            throw named;
        }
        raw.setSoTimeout(before);
        return s;
    }

    private static SSLContext context(List<X509Certificate> trusted, List<X509Certificate> chain, PrivateKey key) {
        try {
            KeyStore trust = KeyStore.getInstance("PKCS12");
            trust.load(null, null);
            for (int i = 0; i < trusted.size(); i++) {
                trust.setCertificateEntry("ca-" + i, trusted.get(i));
            }
            TrustManagerFactory tmf = TrustManagerFactory.getInstance(TrustManagerFactory.getDefaultAlgorithm());
            tmf.init(trust);
            KeyManager[] own = key == null ? null : new KeyManager[] {new OwnCertificate(chain.toArray(X509Certificate[]::new), key)};
            SSLContext c = SSLContext.getInstance("TLS");
            c.init(own, tmf.getTrustManagers(), null);
            return c;
        } catch (GeneralSecurityException | IOException e) {
            // e.g. a key that does not belong to the certificate; the message names no key material
            throw new IllegalArgumentException("cannot set up TLS: " + e.getMessage(), e);
        }
    }

    /**
     * Presents the configured certificate whenever its key type is asked for, whichever CAs the node
     * names in its request: the JDK's own key managers send nothing when the issuer is not named,
     * which would hide a wrong certificate behind "no certificate" in the node's log.
     */
    private static final class OwnCertificate extends X509ExtendedKeyManager {
        private static final String ALIAS = "client";
        private final X509Certificate[] chain;
        private final PrivateKey key;

        OwnCertificate(X509Certificate[] chain, PrivateKey key) {
            this.chain = chain;
            this.key = key;
        }

        private String alias(String[] keyTypes) {
            return keyTypes != null && Arrays.asList(keyTypes).contains(key.getAlgorithm()) ? ALIAS : null;
        }

        @Override
        public String chooseClientAlias(String[] keyTypes, Principal[] issuers, Socket socket) {
            return alias(keyTypes);
        }

        @Override
        public String chooseEngineClientAlias(String[] keyTypes, Principal[] issuers, SSLEngine engine) {
            return alias(keyTypes);
        }

        @Override
        public String[] getClientAliases(String keyType, Principal[] issuers) {
            return key.getAlgorithm().equals(keyType) ? new String[] {ALIAS} : null;
        }

        @Override
        public String[] getServerAliases(String keyType, Principal[] issuers) {
            return null;
        }

        @Override
        public String chooseServerAlias(String keyType, Principal[] issuers, Socket socket) {
            return null;
        }

        @Override
        public X509Certificate[] getCertificateChain(String alias) {
            return ALIAS.equals(alias) ? chain.clone() : null;
        }

        @Override
        public PrivateKey getPrivateKey(String alias) {
            return ALIAS.equals(alias) ? key : null;
        }
    }
}
