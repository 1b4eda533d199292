package dev.afterglow.node.tls;

import io.netty.handler.ssl.NotSslRecordException;
import io.netty.handler.ssl.SslHandshakeTimeoutException;
import java.nio.channels.ClosedChannelException;
import java.security.cert.CertPathBuilderException;
import java.security.cert.CertPathValidatorException;
import java.security.cert.CertificateException;
import java.security.cert.CertificateExpiredException;
import java.security.cert.CertificateNotYetValidException;

/**
 * Why a TLS handshake on one of the node's listeners failed, told from the exception Netty's
 * {@code SslHandler} reports. The kinds only choose what is logged (once per kind); every failure
 * counts in {@code afterglow_tls_handshake_failures_total} alike.
 */
public enum HandshakeFailure {
    /** The first bytes were not a TLS record. */
    NOT_TLS("not TLS: the first bytes are not a TLS record (a plain-text client on a TLS port?)"),
    /** No completed handshake within the handshake timeout. */
    TIMEOUT("no completed handshake within the handshake timeout"),
    /** The peer closed the connection before the handshake completed. */
    CLOSED("the client closed the connection during the handshake"),
    /** The peer sent a fatal alert, most often because it does not trust the node's certificate. */
    CLIENT_ABORTED("the client aborted the handshake with an alert (does it trust this node's certificate?)"),
    /** {@code tls.client-ca-file} is set and the client sent no certificate. */
    NO_CLIENT_CERTIFICATE("the client sent no certificate, and tls.client-ca-file requires one"),
    /** The client's certificate (or one in its chain) is expired or not yet valid. */
    CLIENT_CERTIFICATE_EXPIRED("the client's certificate is expired or not yet valid"),
    /** The client's certificate does not chain to {@code tls.client-ca-file}. */
    CLIENT_CERTIFICATE_UNTRUSTED("the client's certificate is not signed by a CA in tls.client-ca-file"),
    /** Anything else: no common protocol version or cipher suite, a malformed handshake message. */
    OTHER("handshake error (no common protocol version or cipher suite, or a malformed message)");

    private final String description;

    HandshakeFailure(String description) {
        this.description = description;
    }

    /** What went wrong, for the log. */
    public String description() {
        return description;
    }

    /** The kind of the cause of a failed handshake (its whole cause chain is looked at). */
    public static HandshakeFailure of(Throwable cause) {
        for (Throwable t = cause; t != null; t = t.getCause()) {
            if (t instanceof NotSslRecordException) {
                return NOT_TLS;
            }
            if (t instanceof SslHandshakeTimeoutException) {
                return TIMEOUT;
            }
            if (t instanceof ClosedChannelException) {
                return CLOSED;
            }
            if (t instanceof CertificateExpiredException || t instanceof CertificateNotYetValidException
                    || (t instanceof CertPathValidatorException v
                    && (v.getReason() == CertPathValidatorException.BasicReason.EXPIRED
                    || v.getReason() == CertPathValidatorException.BasicReason.NOT_YET_VALID))) {
                return CLIENT_CERTIFICATE_EXPIRED;
            }
        }
        for (Throwable t = cause; t != null; t = t.getCause()) {
            if (t instanceof CertificateException || t instanceof CertPathValidatorException
                    || t instanceof CertPathBuilderException) {
                return CLIENT_CERTIFICATE_UNTRUSTED;
            }
            String m = t.getMessage();
            if (m != null && m.startsWith("Empty") && m.contains("certificate chain")) {
                return NO_CLIENT_CERTIFICATE; // the JDK's words when a required client certificate is missing
            }
            if (m != null && m.startsWith("Received fatal alert")) {
                return CLIENT_ABORTED;
            }
            if (t instanceof javax.crypto.BadPaddingException && m != null && m.contains("fragment (2)")) {
                // A 2-byte record where an encrypted one was due: an alert (RFC 8446, sections 5.1 and 6)
                // sent unencrypted, as OpenSSL clients (curl, Python) do when they refuse the node's certificate.
                return CLIENT_ABORTED;
            }
        }
        return OTHER;
    }
}
