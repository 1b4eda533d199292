package dev.afterglow.node.tls;

import java.io.IOException;
import java.io.StringWriter;
import java.math.BigInteger;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.GeneralSecurityException;
import java.security.KeyPair;
import java.security.KeyPairGenerator;
import java.security.PrivateKey;
import java.security.cert.X509Certificate;
import java.security.spec.ECGenParameterSpec;
import java.time.Duration;
import java.time.Instant;
import java.util.Base64;
import java.util.Date;
import java.util.concurrent.atomic.AtomicLong;
import org.bouncycastle.asn1.x500.X500Name;
import org.bouncycastle.asn1.x509.BasicConstraints;
import org.bouncycastle.asn1.x509.ExtendedKeyUsage;
import org.bouncycastle.asn1.x509.Extension;
import org.bouncycastle.asn1.x509.GeneralName;
import org.bouncycastle.asn1.x509.GeneralNames;
import org.bouncycastle.asn1.x509.KeyPurposeId;
import org.bouncycastle.asn1.x509.KeyUsage;
import org.bouncycastle.cert.X509v3CertificateBuilder;
import org.bouncycastle.cert.jcajce.JcaX509CertificateConverter;
import org.bouncycastle.cert.jcajce.JcaX509ExtensionUtils;
import org.bouncycastle.cert.jcajce.JcaX509v3CertificateBuilder;
import org.bouncycastle.openssl.jcajce.JcaPEMWriter;
import org.bouncycastle.operator.OperatorCreationException;
import org.bouncycastle.operator.jcajce.JcaContentSignerBuilder;

/**
 * Certificates for TLS tests, made at test time with BouncyCastle and written as PEM files
 * (RFC 7468) into a directory: a CA; a server certificate for 127.0.0.1 (IP SAN) and localhost
 * signed by it; a client certificate, an expired client certificate; and an unrelated CA with a
 * client certificate of its own. Extensions follow RFC 5280 (CA: critical basicConstraints and
 * keyCertSign; leaves: subject and authority key identifiers, extended key usage), which OpenSSL
 * (curl, Python's ssl) and the JDK check.
 */
public final class TestPki {
    private static final AtomicLong SERIAL = new AtomicLong(System.currentTimeMillis());

    /** The CA both node and legitimate clients use. */
    public final Path caCert;
    /** Server certificate (RSA 2048) for 127.0.0.1 and localhost, signed by {@link #caCert}. */
    public final Path serverCert;
    public final Path serverKey;
    /** Client certificate (EC P-256) signed by {@link #caCert}. */
    public final Path clientCert;
    public final Path clientKey;
    /** Client certificate signed by {@link #caCert} that expired yesterday. */
    public final Path expiredClientCert;
    public final Path expiredClientKey;
    /** A CA nobody here trusts. */
    public final Path otherCaCert;
    /** Client certificate signed by {@link #otherCaCert}. */
    public final Path otherClientCert;
    public final Path otherClientKey;

    private TestPki(Path dir) throws Exception {
        Instant now = Instant.now();
        Instant from = now.minus(Duration.ofDays(1));
        Instant until = now.plus(Duration.ofDays(30));

        KeyPair caKeys = ec();
        X509Certificate ca = ca("CN=Afterglow Test CA", caKeys, from, until);
        caCert = write(dir.resolve("ca.crt"), pem("CERTIFICATE", ca.getEncoded()));

        KeyPair serverKeys = rsa();
        X509Certificate server = leaf("CN=afterglow-node", serverKeys, ca, caKeys.getPrivate(), from, until, true);
        serverCert = write(dir.resolve("server.crt"), pem("CERTIFICATE", server.getEncoded()));
        serverKey = write(dir.resolve("server.key"), pkcs8(serverKeys.getPrivate()));

        KeyPair clientKeys = ec();
        X509Certificate client = leaf("CN=dock-cam", clientKeys, ca, caKeys.getPrivate(), from, until, false);
        clientCert = write(dir.resolve("client.crt"), pem("CERTIFICATE", client.getEncoded()));
        clientKey = write(dir.resolve("client.key"), pkcs8(clientKeys.getPrivate()));

        KeyPair expiredKeys = ec();
        X509Certificate expired = leaf("CN=old-cam", expiredKeys, ca, caKeys.getPrivate(),
                now.minus(Duration.ofDays(30)), now.minus(Duration.ofDays(1)), false);
        expiredClientCert = write(dir.resolve("expired-client.crt"), pem("CERTIFICATE", expired.getEncoded()));
        expiredClientKey = write(dir.resolve("expired-client.key"), pkcs8(expiredKeys.getPrivate()));

        KeyPair otherCaKeys = ec();
        X509Certificate otherCa = ca("CN=Unrelated CA", otherCaKeys, from, until);
        otherCaCert = write(dir.resolve("other-ca.crt"), pem("CERTIFICATE", otherCa.getEncoded()));
        KeyPair otherClientKeys = ec();
        X509Certificate otherClient = leaf("CN=stranger", otherClientKeys, otherCa, otherCaKeys.getPrivate(), from, until, false);
        otherClientCert = write(dir.resolve("other-client.crt"), pem("CERTIFICATE", otherClient.getEncoded()));
        otherClientKey = write(dir.resolve("other-client.key"), pkcs8(otherClientKeys.getPrivate()));
    }

    /** Makes every certificate and key in {@code dir}. */
    public static TestPki create(Path dir) throws Exception {
        return new TestPki(dir);
    }

    /** A self-signed EC certificate and its key for 127.0.0.1, valid between the two instants; returns {cert, key}. */
    public static Path[] selfSignedServer(Path dir, String name, Instant from, Instant until) throws Exception {
        KeyPair keys = ec();
        X509Certificate ca = ca("CN=" + name, keys, from, until);
        return new Path[] {write(dir.resolve(name + ".crt"), pem("CERTIFICATE", ca.getEncoded())),
                write(dir.resolve(name + ".key"), pkcs8(keys.getPrivate()))};
    }

    /** The key in the older PKCS#1 / SEC 1 form, as BouncyCastle's PEM writer (like openssl's traditional output) writes it. */
    public static String traditionalPem(PrivateKey key) throws IOException {
        StringWriter out = new StringWriter();
        try (JcaPEMWriter w = new JcaPEMWriter(out)) {
            w.writeObject(key);
        }
        return out.toString();
    }

    /** A fresh RSA 2048 key pair. */
    public static KeyPair rsa() throws GeneralSecurityException {
        KeyPairGenerator g = KeyPairGenerator.getInstance("RSA");
        g.initialize(2048);
        return g.generateKeyPair();
    }

    /** A fresh EC P-256 key pair. */
    public static KeyPair ec() throws GeneralSecurityException {
        KeyPairGenerator g = KeyPairGenerator.getInstance("EC");
        g.initialize(new ECGenParameterSpec("secp256r1"));
        return g.generateKeyPair();
    }

    /** A private key as an unencrypted PKCS#8 PEM block (the JDK encodes private keys as PKCS#8). */
    public static String pkcs8(PrivateKey key) {
        return pem("PRIVATE KEY", key.getEncoded());
    }

    /** One PEM block: base64 in lines of 64 characters (RFC 7468, section 2). */
    public static String pem(String label, byte[] der) {
        String body = Base64.getMimeEncoder(64, "\n".getBytes(StandardCharsets.US_ASCII)).encodeToString(der);
        return "-----BEGIN " + label + "-----\n" + body + "\n-----END " + label + "-----\n";
    }

    private static Path write(Path file, String text) throws IOException {
        return Files.writeString(file, text, StandardCharsets.US_ASCII);
    }

    private static X509Certificate ca(String name, KeyPair keys, Instant from, Instant until) throws Exception {
        JcaX509ExtensionUtils ext = new JcaX509ExtensionUtils();
        X509v3CertificateBuilder b = new JcaX509v3CertificateBuilder(new X500Name(name), serial(), Date.from(from),
                Date.from(until), new X500Name(name), keys.getPublic())
                .addExtension(Extension.basicConstraints, true, new BasicConstraints(true))
                .addExtension(Extension.keyUsage, true, new KeyUsage(KeyUsage.keyCertSign | KeyUsage.cRLSign | KeyUsage.digitalSignature))
                .addExtension(Extension.subjectKeyIdentifier, false, ext.createSubjectKeyIdentifier(keys.getPublic()))
                .addExtension(Extension.subjectAlternativeName, false, new GeneralNames(new GeneralName[] {
                        new GeneralName(GeneralName.iPAddress, "127.0.0.1"), new GeneralName(GeneralName.dNSName, "localhost")}));
        return sign(b, keys.getPrivate());
    }

    private static X509Certificate leaf(String name, KeyPair keys, X509Certificate issuer, PrivateKey issuerKey,
            Instant from, Instant until, boolean server) throws Exception {
        JcaX509ExtensionUtils ext = new JcaX509ExtensionUtils();
        X509v3CertificateBuilder b = new JcaX509v3CertificateBuilder(issuer, serial(), Date.from(from), Date.from(until),
                new X500Name(name), keys.getPublic())
                .addExtension(Extension.basicConstraints, true, new BasicConstraints(false))
                .addExtension(Extension.keyUsage, true, new KeyUsage(KeyUsage.digitalSignature | KeyUsage.keyEncipherment))
                .addExtension(Extension.subjectKeyIdentifier, false, ext.createSubjectKeyIdentifier(keys.getPublic()))
                .addExtension(Extension.authorityKeyIdentifier, false, ext.createAuthorityKeyIdentifier(issuer))
                .addExtension(Extension.extendedKeyUsage, false,
                        new ExtendedKeyUsage(server ? KeyPurposeId.id_kp_serverAuth : KeyPurposeId.id_kp_clientAuth));
        if (server) {
            b.addExtension(Extension.subjectAlternativeName, false, new GeneralNames(new GeneralName[] {
                    new GeneralName(GeneralName.iPAddress, "127.0.0.1"), new GeneralName(GeneralName.dNSName, "localhost")}));
        }
        return sign(b, issuerKey);
    }

    private static X509Certificate sign(X509v3CertificateBuilder b, PrivateKey key) throws GeneralSecurityException, OperatorCreationException {
        String algorithm = key.getAlgorithm().equals("RSA") ? "SHA256withRSA" : "SHA256withECDSA";
        return new JcaX509CertificateConverter().getCertificate(b.build(new JcaContentSignerBuilder(algorithm).build(key)));
    }

    private static BigInteger serial() {
        return BigInteger.valueOf(SERIAL.incrementAndGet());
    }
}
