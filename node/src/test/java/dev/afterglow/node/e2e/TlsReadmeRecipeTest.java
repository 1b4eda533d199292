package dev.afterglow.node.e2e;

import static dev.afterglow.node.e2e.StreamingEndToEndTest.waitFor;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.ClientTls;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import java.io.IOException;
import java.net.Socket;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * Runs the README's OpenSSL recipe (section "TLS") and starts a node with what it made: the files
 * pass the configuration checks, and a Java client holding the recipe's client certificate gets
 * {@code /health} over TLS while one without it is refused. In CI (CI=true) a missing openssl fails
 * the test; elsewhere it is skipped.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class TlsReadmeRecipeTest {
    private static final Path OPENSSL = Path.of("/usr/bin/openssl");

    @Test
    void readmeCertificatesShouldServeANodeWithClientCertificates(@TempDir Path dir) throws Exception {
        if (!Files.isExecutable(OPENSSL)) {
            if ("true".equals(System.getenv("CI"))) {
                throw new AssertionError("CI must provide openssl (Debian package openssl)");
            }
            Assumptions.assumeTrue(false, "skipped outside CI: " + OPENSSL + " not found");
        }
        String readme = Files.readString(Path.of("..").toAbsolutePath().normalize().resolve("README.md"));
        int section = readme.indexOf("\n### TLS\n");
        assertTrue(section > 0, "README has a TLS section");
        int start = readme.indexOf("```sh\n", section) + "```sh\n".length();
        String recipe = readme.substring(start, readme.indexOf("```", start));
        assertTrue(recipe.contains("openssl req -x509"), recipe);
        Process p = new ProcessBuilder("bash", "-e", "-c", recipe).directory(dir.toFile()).redirectErrorStream(true).start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertTrue(p.waitFor(60, TimeUnit.SECONDS));
        assertEquals(0, p.exitValue(), out);

        NodeConfig config = NodeConfig.parse("""
                listen: {ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: -1, http-port: 0}
                tls: {cert-file: '%s', key-file: '%s', client-ca-file: '%s'}
                """.formatted(dir.resolve("node.crt"), dir.resolve("node.key"), dir.resolve("ca.crt")), "test");
        ClientTls trusted = ClientTls.trusting(dir.resolve("ca.crt"));
        ClientTls withCertificate = trusted.withClientCertificate(dir.resolve("client.crt"), dir.resolve("client.key"));
        try (AfterglowNode node = AfterglowNode.start(config)) {
            assertTrue(get(node.httpPort(), withCertificate).startsWith("HTTP/1.1 200 OK"));
            IOException refused = assertThrows(IOException.class, () -> get(node.httpPort(), trusted));
            assertTrue(refused.getMessage().startsWith("Received fatal alert: "), refused.toString());
            waitFor(() -> node.counters().get(NodeCounter.TLS_HANDSHAKE_FAILURES) == 1);
        }
    }

    private static String get(int port, ClientTls tls) throws IOException {
        try (Socket s = ClientTls.open("127.0.0.1", port, tls)) {
            s.setSoTimeout(10_000);
            s.getOutputStream().write("GET /health HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n".getBytes(StandardCharsets.US_ASCII));
            s.getOutputStream().flush();
            return new String(s.getInputStream().readAllBytes(), StandardCharsets.US_ASCII);
        }
    }
}
