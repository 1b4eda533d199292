package dev.afterglow.node.cli;

import dev.afterglow.node.client.ClientTls;
import java.nio.file.Path;
import picocli.CommandLine.Option;

/** TLS options shared by the client commands ({@code feed}, {@code watch}); TLS is on when {@code --tls-ca} is given. */
final class TlsOptions {
    @Option(names = "--tls-ca", paramLabel = "FILE", description = "Connect over TLS, trusting the CA certificates in this PEM file.")
    Path ca;

    @Option(names = "--tls-cert", paramLabel = "FILE", description = "With --tls-ca: client certificate (PEM) for a node that asks for one.")
    Path cert;

    @Option(names = "--tls-key", paramLabel = "FILE", description = "With --tls-cert: the client certificate's private key (PEM, PKCS#8).")
    Path key;

    /** The client TLS settings, or null for plain TCP. */
    ClientTls clientTls() {
        if (ca == null) {
            if (cert != null || key != null) {
                throw new IllegalArgumentException((cert != null ? "--tls-cert" : "--tls-key") + " needs --tls-ca");
            }
            return null;
        }
        if ((cert == null) != (key == null)) {
            throw new IllegalArgumentException(cert == null ? "--tls-key needs --tls-cert" : "--tls-cert needs --tls-key");
        }
        ClientTls tls = ClientTls.trusting(ca);
        return cert == null ? tls : tls.withClientCertificate(cert, key);
    }
}
