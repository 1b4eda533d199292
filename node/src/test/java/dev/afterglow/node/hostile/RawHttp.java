package dev.afterglow.node.hostile;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.nio.charset.StandardCharsets;
import java.util.Locale;
import java.util.Map;

/**
 * A minimal HTTP/1.1 client over a plain socket (RFC 9112 message syntax): one request per
 * connection with {@code Connection: close}, the response's status line, headers and a body read
 * by {@code Content-Length}. No pooling, so a node that closes idle connections cannot make a
 * probe fail, and the whole exchange is held to one deadline.
 */
final class RawHttp {
    private RawHttp() {
    }

    /** A response, and how long the exchange took. */
    record Response(int status, String head, String body, long millis) {
        /** The value of header {@code name} (case-insensitive), or null. */
        String header(String name) {
            for (String line : head.split("\r\n")) {
                int colon = line.indexOf(':');
                if (colon > 0 && line.substring(0, colon).trim().equalsIgnoreCase(name)) {
                    return line.substring(colon + 1).trim();
                }
            }
            return null;
        }
    }

    /** {@code GET path} from 127.0.0.1. */
    static Response get(int port, String path, int timeoutMillis) throws IOException {
        return request(InetAddress.getLoopbackAddress(), port, "GET", path, Map.of(), null, timeoutMillis);
    }

    /**
     * Sends one request from {@code local} and reads the response head, then the body if a
     * {@code Content-Length} says how long it is (a 101 answer has none; it is returned at once).
     */
    static Response request(InetAddress local, int port, String method, String path, Map<String, String> headers,
            String body, int timeoutMillis) throws IOException {
        long start = System.nanoTime();
        long deadline = start + timeoutMillis * 1_000_000L;
        try (Socket s = new Socket()) {
            s.bind(new InetSocketAddress(local, 0));
            s.connect(new InetSocketAddress(InetAddress.getLoopbackAddress(), port), timeoutMillis);
            StringBuilder req = new StringBuilder();
            req.append(method).append(' ').append(path).append(" HTTP/1.1\r\n");
            req.append("Host: 127.0.0.1:").append(port).append("\r\n");
            boolean upgrade = headers.keySet().stream().anyMatch(k -> k.equalsIgnoreCase("Upgrade"));
            if (!upgrade) {
                req.append("Connection: close\r\n");
            }
            headers.forEach((k, v) -> req.append(k).append(": ").append(v).append("\r\n"));
            byte[] content = body == null ? new byte[0] : body.getBytes(StandardCharsets.UTF_8);
            if (body != null) {
                req.append("Content-Length: ").append(content.length).append("\r\n");
            }
            req.append("\r\n");
            OutputStream out = s.getOutputStream();
            out.write(req.toString().getBytes(StandardCharsets.US_ASCII));
            out.write(content);
            out.flush();
            InputStream in = s.getInputStream();
            String head = readHead(s, in, deadline);
            int status = Integer.parseInt(head.substring(9, 12));
            String lengthText = headerValue(head, "content-length");
            String text = "";
            if (status != 101 && lengthText != null) {
                int length = Integer.parseInt(lengthText);
                ByteArrayOutputStream b = new ByteArrayOutputStream(length);
                byte[] buf = new byte[8192];
                while (b.size() < length) {
                    s.setSoTimeout(remaining(deadline));
                    int n = in.read(buf, 0, Math.min(buf.length, length - b.size()));
                    if (n < 0) {
                        throw new IOException("closed after " + b.size() + " of " + length + " body bytes");
                    }
                    b.write(buf, 0, n);
                }
                text = b.toString(StandardCharsets.UTF_8);
            }
            return new Response(status, head, text, (System.nanoTime() - start) / 1_000_000);
        }
    }

    private static String readHead(Socket s, InputStream in, long deadline) throws IOException {
        ByteArrayOutputStream head = new ByteArrayOutputStream();
        int matched = 0;
        byte[] end = {'\r', '\n', '\r', '\n'};
        while (matched < 4) {
            s.setSoTimeout(remaining(deadline));
            int b = in.read();
            if (b < 0) {
                throw new IOException("closed before the end of the response head: " + head.toString(StandardCharsets.US_ASCII));
            }
            head.write(b);
            matched = b == end[matched] ? matched + 1 : (b == '\r' ? 1 : 0);
        }
        String text = head.toString(StandardCharsets.US_ASCII);
        if (!text.startsWith("HTTP/1.1 ") && !text.startsWith("HTTP/1.0 ")) {
            throw new IOException("not an HTTP response: " + text);
        }
        return text;
    }

    private static String headerValue(String head, String lowerName) {
        for (String line : head.split("\r\n")) {
            int colon = line.indexOf(':');
            if (colon > 0 && line.substring(0, colon).trim().toLowerCase(Locale.ROOT).equals(lowerName)) {
                return line.substring(colon + 1).trim();
            }
        }
        return null;
    }

    private static int remaining(long deadline) throws IOException {
        long ms = (deadline - System.nanoTime()) / 1_000_000;
        if (ms <= 0) {
            throw new java.net.SocketTimeoutException("deadline passed");
        }
        return (int) ms;
    }
}
