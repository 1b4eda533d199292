package dev.afterglow.node.config;

import java.util.ArrayList;
import java.util.List;

/**
 * TLS for the TCP listeners (sensor ingest, subscribers, HTTP): off unless {@code cert-file} and
 * {@code key-file} name PEM files. With {@code client-ca-file}, clients must present a certificate
 * signed by that CA. UDP ingest is not covered by TLS; it is authenticated per datagram instead
 * (sealed datagrams, see {@code SealedDatagram} in the schema).
 */
public final class TlsConfig {
    /** Server certificate chain, PEM. Empty: TLS off. */
    public String certFile = "";
    /** Private key of the certificate, PEM (PKCS#8). */
    public String keyFile = "";
    /** CA certificates (PEM) that client certificates must chain to; empty: no client certificates asked. */
    public String clientCaFile = "";
    /** Which listeners use TLS when it is on: any of {@code ingest}, {@code subscribers}, {@code http}. */
    public List<String> listeners = new ArrayList<>(List.of("ingest", "subscribers", "http"));

    /** True when a certificate and key are configured. */
    public boolean enabled() {
        return certFile != null && !certFile.isBlank();
    }

    void validate() {
        // Completed with the TLS work: files readable, key matches, listener names known.
    }
}
