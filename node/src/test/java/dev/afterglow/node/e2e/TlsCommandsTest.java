package dev.afterglow.node.e2e;

import static dev.afterglow.node.e2e.StreamingEndToEndTest.waitFor;
import static dev.afterglow.node.e2e.TlsFixture.ALL;
import static dev.afterglow.node.e2e.TlsFixture.failures;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowCli;
import dev.afterglow.node.AfterglowNode;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;
import picocli.CommandLine;

/** {@code afterglow feed} and {@code watch} with {@code --tls-ca}, {@code --tls-cert} and {@code --tls-key} against a TLS node. */
@Timeout(value = 90, unit = TimeUnit.SECONDS)
class TlsCommandsTest {
    @TempDir
    static Path dir;
    static TlsFixture fixture;

    @BeforeAll
    static void certificates() throws Exception {
        fixture = new TlsFixture(dir);
    }

    private static int run(StringWriter err, String... args) {
        CommandLine cl = AfterglowCli.commandLine();
        cl.setErr(new PrintWriter(err, true));
        return cl.execute(args);
    }

    @Test
    void feedAndWatchShouldWorkOverTlsWithClientCertificates() throws Exception {
        String ca = fixture.pki.caCert.toString();
        String cert = fixture.pki.clientCert.toString();
        String key = fixture.pki.clientKey.toString();
        PrintStream saved = System.out;
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        try (AfterglowNode node = AfterglowNode.start(fixture.config(true, ALL))) {
            System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
            AtomicInteger feedExit = new AtomicInteger(-1);
            StringWriter feedErr = new StringWriter();
            Thread feeder = new Thread(() -> feedExit.set(run(feedErr, "feed", "--node", "127.0.0.1:" + node.ingestTcpPort(),
                    "--sensor-id", "belt", "--width", "64", "--height", "48", "--seconds", "3", "--frames=false",
                    "--tls-ca", ca, "--tls-cert", cert, "--tls-key", key)));
            feeder.start();
            waitFor(() -> node.sensors().get("belt") != null);
            StringWriter watchErr = new StringWriter();
            int watchExit = run(watchErr, "watch", "--node", "127.0.0.1:" + node.subscriberPort(), "--sensor-id", "belt",
                    "--rate", "10", "--count", "3", "--tls-ca", ca, "--tls-cert", cert, "--tls-key", key);
            feeder.join(30_000);
            System.setOut(saved);
            String out = captured.toString(StandardCharsets.UTF_8);
            assertEquals(0, watchExit, watchErr + out);
            assertEquals(0, feedExit.get(), feedErr + out);
            List<String> frames = out.lines().filter(l -> l.startsWith("belt #")).toList();
            assertEquals(3, frames.size(), out);
            assertTrue(frames.get(0).contains(" 64x48 "), frames.get(0));
            assertTrue(out.contains("afterglow feed: sent "), out);
            assertEquals(0, failures(node));

            // Trusting another CA: one line naming the handshake's reason, exit code 1.
            StringWriter err = new StringWriter();
            int code = run(err, "watch", "--node", "127.0.0.1:" + node.subscriberPort(), "--sensor-id", "belt", "--count", "1",
                    "--tls-ca", fixture.pki.otherCaCert.toString());
            assertEquals(1, code, err.toString());
            String line = err.toString().strip();
            assertEquals(1, line.lines().count(), line);
            assertTrue(line.startsWith("afterglow: TLS handshake with 127.0.0.1:" + node.subscriberPort() + " failed: PKIX path building failed"), line);
            waitFor(() -> failures(node) == 1);
        } finally {
            System.setOut(saved);
        }
    }

    @Test
    void shouldRefuseIncompleteTlsOptions() {
        String ca = fixture.pki.caCert.toString();
        StringWriter err = new StringWriter();
        assertEquals(2, run(err, "watch", "--count", "1", "--tls-cert", fixture.pki.clientCert.toString()));
        assertEquals("afterglow: --tls-cert needs --tls-ca", err.toString().strip());
        err = new StringWriter();
        assertEquals(2, run(err, "watch", "--count", "1", "--tls-ca", ca, "--tls-cert", fixture.pki.clientCert.toString()));
        assertEquals("afterglow: --tls-cert needs --tls-key", err.toString().strip());
        err = new StringWriter();
        assertEquals(2, run(err, "feed", "--transport", "udp", "--tls-ca", ca));
        assertEquals("afterglow: --tls-ca: TLS covers TCP only, not --transport=udp", err.toString().strip());
        err = new StringWriter();
        Path missing = dir.resolve("missing.pem");
        assertEquals(2, run(err, "watch", "--count", "1", "--tls-ca", missing.toString()));
        assertEquals("afterglow: --tls-ca=" + missing + ": no such file", err.toString().strip());
        err = new StringWriter();
        assertEquals(2, run(err, "watch", "--count", "1", "--tls-ca", ca, "--tls-cert", fixture.pki.clientCert.toString(),
                "--tls-key", fixture.pki.otherClientKey.toString()));
        assertEquals("afterglow: --tls-key=" + fixture.pki.otherClientKey + " does not belong to the certificate in --tls-cert="
                + fixture.pki.clientCert, err.toString().strip());
    }
}
