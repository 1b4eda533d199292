package dev.afterglow.node.tls;

import dev.afterglow.node.config.ConfigException;
import io.netty.handler.ssl.ClientAuth;
import io.netty.handler.ssl.SslContext;
import io.netty.handler.ssl.SslContextBuilder;
import io.netty.handler.ssl.SslProvider;
import java.nio.file.Path;
import java.security.GeneralSecurityException;
import java.security.PrivateKey;
import java.security.SecureRandom;
import java.security.Signature;
import java.security.cert.CertificateExpiredException;
import java.security.cert.CertificateNotYetValidException;
import java.security.cert.X509Certificate;
import java.util.List;
import javax.net.ssl.SSLException;

/**
 * Builds the node's server {@link SslContext} from PEM files, once, at configuration time: the
 * certificate chain and its PKCS#8 key (RSA or EC, see {@link Pem}), checked to belong together and
 * to be valid now, and optionally the CA certificates that client certificates must chain to
 * (then a client certificate is required). TLS 1.3 and 1.2 only, with the JDK's provider.
 */
public final class TlsContexts {
    /** Protocol versions offered; older ones are refused (RFC 8996 deprecates TLS 1.0 and 1.1). */
    public static final String[] PROTOCOLS = {"TLSv1.3", "TLSv1.2"};

    private TlsContexts() {
    }

    /**
     * The server context.
     *
     * @param clientCaFile CA certificates for client certificates, or null for none asked
     * @throws ConfigException naming the setting and file that is wrong
     */
    public static SslContext server(Path certFile, Path keyFile, Path clientCaFile) {
        List<X509Certificate> chain = Pem.certificates(certFile, "tls.cert-file");
        PrivateKey key = Pem.privateKey(keyFile, "tls.key-file");
        X509Certificate leaf = chain.get(0);
        checkValidNow(leaf, "tls.cert-file", certFile);
        checkKeyMatches(leaf, key, Pem.where("tls.cert-file", certFile), Pem.where("tls.key-file", keyFile));
        SslContextBuilder builder = SslContextBuilder.forServer(key, chain.toArray(X509Certificate[]::new))
                .sslProvider(SslProvider.JDK)
                .protocols(PROTOCOLS);
        if (clientCaFile != null) {
            List<X509Certificate> cas = Pem.certificates(clientCaFile, "tls.client-ca-file");
            builder.trustManager(cas.toArray(X509Certificate[]::new)).clientAuth(ClientAuth.REQUIRE);
        }
        try {
            return builder.build();
        } catch (SSLException | RuntimeException e) {
            throw new ConfigException("tls: cannot build the TLS context from tls.cert-file=" + certFile
                    + " and tls.key-file=" + keyFile + ": " + e.getMessage(), e);
        }
    }

    private static void checkValidNow(X509Certificate cert, String setting, Path file) {
        try {
            cert.checkValidity();
        } catch (CertificateExpiredException e) {
            throw new ConfigException(Pem.where(setting, file) + ": the certificate expired on " + cert.getNotAfter().toInstant());
        } catch (CertificateNotYetValidException e) {
            throw new ConfigException(Pem.where(setting, file) + ": the certificate is not valid before " + cert.getNotBefore().toInstant());
        }
    }

    /**
     * Checks that a private key belongs to a certificate: signs a random challenge with the key and
     * verifies it with the certificate's public key.
     *
     * @param certWhere names the certificate's setting and file in the error, e.g. {@code tls.cert-file=/etc/node.crt}
     * @throws ConfigException if they do not belong together
     */
    public static void checkKeyMatches(X509Certificate cert, PrivateKey key, String certWhere, String keyWhere) {
        String mismatch = keyWhere + " does not belong to the certificate in " + certWhere;
        String certAlgorithm = cert.getPublicKey().getAlgorithm();
        if (!certAlgorithm.equals(key.getAlgorithm())) {
            throw new ConfigException(mismatch + " (" + key.getAlgorithm() + " key, " + certAlgorithm + " certificate)");
        }
        String algorithm = key.getAlgorithm().equals("RSA") ? "SHA256withRSA" : "SHA256withECDSA";
        try {
            byte[] challenge = new byte[32];
            new SecureRandom().nextBytes(challenge);
            Signature signer = Signature.getInstance(algorithm);
            signer.initSign(key);
            signer.update(challenge);
            byte[] signature = signer.sign();
            Signature verifier = Signature.getInstance(algorithm);
            verifier.initVerify(cert.getPublicKey());
            verifier.update(challenge);
            if (!verifier.verify(signature)) {
                throw new ConfigException(mismatch);
            }
        } catch (GeneralSecurityException e) {
            throw new ConfigException(mismatch + " (" + e.getClass().getSimpleName() + ")", e);
        }
    }
}
