package dev.afterglow.node.e2e;

import static dev.afterglow.node.e2e.StreamingEndToEndTest.waitFor;
import static dev.afterglow.node.e2e.TlsFixture.ALL;
import static dev.afterglow.node.e2e.TlsFixture.failures;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.tls.HandshakeFailure;
import dev.afterglow.node.tls.TestPki;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The node's HTTPS endpoints with a real TLS client outside the JVM: curl (with OpenSSL). In CI
 * (CI=true) a missing curl fails the test; elsewhere it is skipped. Exit codes are curl's documented
 * ones (libcurl-errors(3)): 0 OK, 52 CURLE_GOT_NOTHING, 56 CURLE_RECV_ERROR, 60
 * CURLE_PEER_FAILED_VERIFICATION.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class TlsCurlTest {
    private static final Path CURL = Path.of("/usr/bin/curl");

    @TempDir
    static Path dir;
    static TlsFixture fixture;

    @BeforeAll
    static void certificates() throws Exception {
        requireCurl();
        fixture = new TlsFixture(dir);
    }

    private static TestPki pki() {
        return fixture.pki;
    }

    private static dev.afterglow.node.config.NodeConfig config(boolean clientCertificates, String listeners) {
        return fixture.config(clientCertificates, listeners);
    }

    @Test
    void shouldServeMetricsOverHttpsAndCountRefusedHandshakes() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(config(false, ALL))) {
            String https = "https://127.0.0.1:" + node.httpPort() + "/metrics";
            Result ok = curl("--cacert", pki().caCert.toString(), https);
            assertEquals(0, ok.exit, ok.toString());
            assertEquals("200", ok.status, ok.toString());
            assertTrue(ok.body.contains("# TYPE afterglow_tls_handshake_failures_total counter"), ok.body);
            assertTrue(ok.body.contains("afterglow_tls_handshake_failures_total 0.0"), ok.body);

            // curl trusting only the system's CAs refuses the node's certificate; the node logs why.
            try (TlsLog log = new TlsLog()) {
                Result untrusted = curl(https);
                assertEquals(60, untrusted.exit, untrusted.toString());
                waitFor(() -> failures(node) == 1);
                assertEquals(1, log.count(HandshakeFailure.CLIENT_ABORTED.description()), String.join("\n", log.lines()));
            }

            // Plain HTTP on the TLS port gets no HTTP answer: "Empty reply from server".
            Result plain = curl("http://127.0.0.1:" + node.httpPort() + "/metrics");
            assertEquals(52, plain.exit, plain.toString());
            assertEquals("000", plain.status, plain.toString());
            waitFor(() -> failures(node) == 2);

            Result after = curl("--cacert", pki().caCert.toString(), https);
            assertEquals("200", after.status, after.toString());
            assertTrue(after.body.contains("afterglow_tls_handshake_failures_total 2.0"), after.body);
        }
    }

    @Test
    void shouldAskCurlForAClientCertificateWhenConfigured() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(config(true, ALL))) {
            String https = "https://127.0.0.1:" + node.httpPort() + "/health";
            Result ok = curl("--cacert", pki().caCert.toString(), "--cert", pki().clientCert.toString(),
                    "--key", pki().clientKey.toString(), https);
            assertEquals("200", ok.status, ok.toString());
            assertEquals("ok", ok.body.strip(), ok.toString());

            // With TLS 1.3 curl reads the node's alert after its side of the handshake: a receive error.
            Result none = curl("--cacert", pki().caCert.toString(), https);
            assertEquals(56, none.exit, none.toString());
            assertEquals("000", none.status, none.toString());
            assertTrue(none.stderr.contains("alert"), none.toString());
            waitFor(() -> failures(node) == 1);

            Result expired = curl("--cacert", pki().caCert.toString(), "--cert", pki().expiredClientCert.toString(),
                    "--key", pki().expiredClientKey.toString(), https);
            assertEquals(56, expired.exit, expired.toString());
            assertTrue(expired.stderr.contains("alert"), expired.toString());
            waitFor(() -> failures(node) == 2);
        }
    }

    private record Result(int exit, String status, String body, String stderr) {
    }

    /** Runs curl; the status code comes from {@code -w} on a line of its own after the body. */
    private static Result curl(String... args) throws Exception {
        List<String> cmd = new ArrayList<>(List.of(CURL.toString(), "-sS", "--max-time", "20", "-o", "-", "-w", "\n%{http_code}"));
        cmd.addAll(List.of(args));
        Path err = Files.createTempFile(dir, "curl", ".err");
        Process p = new ProcessBuilder(cmd).redirectError(err.toFile()).start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        if (!p.waitFor(30, TimeUnit.SECONDS)) {
            p.destroyForcibly();
            throw new AssertionError("curl timed out: " + cmd);
        }
        int nl = out.lastIndexOf('\n');
        return new Result(p.exitValue(), out.substring(nl + 1), nl < 0 ? "" : out.substring(0, nl), Files.readString(err));
    }

    private static void requireCurl() {
        if (!Files.isExecutable(CURL)) {
            if ("true".equals(System.getenv("CI"))) {
                throw new AssertionError("CI must provide curl (Debian package curl)");
            }
            Assumptions.assumeTrue(false, "skipped outside CI: " + CURL + " not found");
        }
    }
}
