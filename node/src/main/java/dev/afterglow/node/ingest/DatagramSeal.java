package dev.afterglow.node.ingest;

import com.google.protobuf.ByteString;
import java.nio.charset.StandardCharsets;
import java.security.GeneralSecurityException;
import java.security.MessageDigest;
import javax.crypto.Mac;
import javax.crypto.spec.SecretKeySpec;

/**
 * The seal of a UDP datagram: HMAC-SHA256 (RFC 2104, FIPS 180-4) of the inner envelope's bytes,
 * keyed by the UTF-8 bytes of the sensor's token; 32 bytes, compared in constant time. One
 * instance per thread (it keeps a {@link Mac}).
 */
public final class DatagramSeal {
    /** Length of a tag in bytes. */
    public static final int TAG_BYTES = 32;
    private final Mac mac;
    private String keyedWith;

    public DatagramSeal() {
        try {
            mac = Mac.getInstance("HmacSHA256");
        } catch (GeneralSecurityException e) {
            throw new IllegalStateException("HmacSHA256 is required of every Java platform", e);
        }
    }

    /** The tag of {@code message} under {@code token}. */
    public byte[] tag(String token, ByteString message) {
        key(token);
        mac.update(message.asReadOnlyByteBuffer());
        return mac.doFinal();
    }

    /** True if {@code tag} is the tag of {@code message} under {@code token}. */
    public boolean verifies(String token, ByteString message, ByteString tag) {
        if (tag.size() != TAG_BYTES) {
            return false;
        }
        return MessageDigest.isEqual(tag(token, message), tag.toByteArray());
    }

    private void key(String token) {
        if (!token.equals(keyedWith)) {
            try {
                mac.init(new SecretKeySpec(token.getBytes(StandardCharsets.UTF_8), "HmacSHA256"));
            } catch (GeneralSecurityException e) {
                throw new IllegalStateException(e);
            }
            keyedWith = token;
        }
    }
}
