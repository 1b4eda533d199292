package dev.afterglow.node.tls;

import dev.afterglow.node.config.ConfigException;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.GeneralSecurityException;
import java.security.KeyFactory;
import java.security.PrivateKey;
import java.security.cert.CertificateException;
import java.security.cert.CertificateFactory;
import java.security.cert.X509Certificate;
import java.security.spec.PKCS8EncodedKeySpec;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Base64;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * Reads PEM files (RFC 7468 text encoding): X.509 certificates ({@code CERTIFICATE} blocks) and
 * unencrypted PKCS#8 private keys ({@code PRIVATE KEY}, RSA or EC), which is what
 * {@code openssl req -newkey ... -nodes}, {@code openssl genpkey} and most certificate tools write.
 * Older PKCS#1 ({@code RSA PRIVATE KEY}) and SEC 1 ({@code EC PRIVATE KEY}) keys and encrypted keys
 * are refused with the openssl command that converts them.
 *
 * <p>Errors are {@link ConfigException}s naming the setting and the file, never the file's content:
 * key material is not printed.
 */
public final class Pem {
    private static final Pattern BLOCK = Pattern.compile(
            "-----BEGIN ([A-Z0-9 ]+)-----\\s*([A-Za-z0-9+/=\\s]*?)-----END \\1-----");

    private Pem() {
    }

    /** The certificates of every {@code CERTIFICATE} block, in file order (a chain: leaf first). */
    public static List<X509Certificate> certificates(Path file, String setting) {
        List<X509Certificate> out = new ArrayList<>();
        try {
            CertificateFactory factory = CertificateFactory.getInstance("X.509");
            for (Block b : blocks(file, setting)) {
                if (b.label.equals("CERTIFICATE")) {
                    out.add((X509Certificate) factory.generateCertificate(new ByteArrayInputStream(b.der(file, setting))));
                }
            }
        } catch (CertificateException e) {
            throw new ConfigException(where(setting, file) + ": not a valid X.509 certificate (" + e.getMessage() + ")", e);
        }
        if (out.isEmpty()) {
            throw new ConfigException(where(setting, file) + ": no PEM CERTIFICATE block");
        }
        return out;
    }

    /** The one unencrypted PKCS#8 private key in the file, RSA or EC. */
    public static PrivateKey privateKey(Path file, String setting) {
        List<Block> blocks = blocks(file, setting);
        Block key = null;
        for (Block b : blocks) {
            switch (b.label) {
                case "PRIVATE KEY" -> {
                    if (key != null) {
                        throw new ConfigException(where(setting, file) + ": more than one PRIVATE KEY block");
                    }
                    key = b;
                }
                case "RSA PRIVATE KEY", "EC PRIVATE KEY" -> throw new ConfigException(where(setting, file) + ": "
                        + b.label + " (PKCS#1 / SEC 1) is not supported; convert it to PKCS#8 with "
                        + "openssl pkcs8 -topk8 -nocrypt -in KEY -out KEY.pkcs8.pem");
                case "ENCRYPTED PRIVATE KEY" -> throw new ConfigException(where(setting, file)
                        + ": encrypted keys are not supported; decrypt it with openssl pkcs8 -in KEY -out PLAIN.pem "
                        + "and protect the file by its permissions");
                default -> {
                    // certificates or parameters beside the key are allowed and ignored
                }
            }
        }
        if (key == null) {
            throw new ConfigException(where(setting, file) + ": no PEM PRIVATE KEY block (PKCS#8)");
        }
        byte[] der = key.der(file, setting);
        try {
            for (String algorithm : new String[] {"RSA", "EC"}) {
                try {
                    return KeyFactory.getInstance(algorithm).generatePrivate(new PKCS8EncodedKeySpec(der));
                } catch (java.security.spec.InvalidKeySpecException notThisOne) {
                    // try the next algorithm
                }
            }
        } catch (GeneralSecurityException e) {
            throw new ConfigException(where(setting, file) + ": cannot read the key (" + e.getClass().getSimpleName() + ")", e);
        } finally {
            Arrays.fill(der, (byte) 0);
        }
        throw new ConfigException(where(setting, file) + ": not an RSA or EC PKCS#8 private key");
    }

    /** Checks that the file exists, is a regular file and can be read. */
    public static void readable(Path file, String setting) {
        if (!Files.exists(file)) {
            throw new ConfigException(where(setting, file) + ": no such file");
        }
        if (!Files.isRegularFile(file)) {
            throw new ConfigException(where(setting, file) + ": not a regular file");
        }
        if (!Files.isReadable(file)) {
            throw new ConfigException(where(setting, file) + ": not readable by this process");
        }
    }

    static String where(String setting, Path file) {
        return setting + "=" + file;
    }

    private static List<Block> blocks(Path file, String setting) {
        readable(file, setting);
        String text;
        try {
            // ISO-8859-1 maps every byte, so a binary (DER) file ends up as "not a PEM file" below.
            text = new String(Files.readAllBytes(file), StandardCharsets.ISO_8859_1);
        } catch (IOException e) {
            throw new ConfigException(where(setting, file) + ": cannot read (" + e.getClass().getSimpleName() + ")", e);
        }
        List<Block> out = new ArrayList<>();
        Matcher m = BLOCK.matcher(text);
        while (m.find()) {
            out.add(new Block(m.group(1), m.group(2)));
        }
        if (out.isEmpty()) {
            throw new ConfigException(where(setting, file) + ": not a PEM file (no -----BEGIN ...----- block)");
        }
        return out;
    }

    private record Block(String label, String base64) {
        byte[] der(Path file, String setting) {
            try {
                return Base64.getMimeDecoder().decode(base64);
            } catch (IllegalArgumentException e) {
                throw new ConfigException(where(setting, file) + ": bad base64 in the " + label + " block");
            }
        }
    }
}
