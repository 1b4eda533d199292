package dev.afterglow.node.e2e;

import static dev.afterglow.node.e2e.StreamingEndToEndTest.waitFor;
import static dev.afterglow.node.e2e.TlsFixture.ALL;
import static dev.afterglow.node.e2e.TlsFixture.H;
import static dev.afterglow.node.e2e.TlsFixture.W;
import static dev.afterglow.node.e2e.TlsFixture.failures;
import static dev.afterglow.node.e2e.TlsFixture.feed;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The Python subscriber example over TLS with Python's ssl module (OpenSSL), against a node that
 * asks for client certificates: with the client certificate it receives frames; without one it
 * fails with the node's TLS alert and the node counts the failed handshake. Needs the same Debian
 * tools as {@link PythonSubscriberExampleTest} (skipped without them outside CI).
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class PythonTlsSubscriberTest {
    @TempDir
    static Path dir;
    static TlsFixture fixture;
    static Path gen;

    @BeforeAll
    static void setUp() throws Exception {
        PythonExamples.requireTools(List.of(), "");
        fixture = new TlsFixture(dir);
        gen = dir.resolve("gen");
        java.nio.file.Files.createDirectories(gen);
        PythonExamples.generate(gen);
    }

    @Test
    void pythonSslShouldReceiveFramesWithAClientCertificateAndBeRefusedWithout() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(fixture.config(true, ALL))) {
            feed(node, fixture.withCertificate);
            waitFor(() -> node.sensors().get("belt") != null);
            List<String> common = List.of(PythonExamples.PYTHON.toString(), PythonExamples.script("afterglow_subscribe.py").toString(),
                    "--port", Integer.toString(node.subscriberPort()), "--sensor", "belt", "--rate", "10", "--count", "4",
                    "--tls-ca", fixture.pki.caCert.toString());

            List<String> ok = new ArrayList<>(common);
            ok.addAll(List.of("--tls-cert", fixture.pki.clientCert.toString(), "--tls-key", fixture.pki.clientKey.toString()));
            Run run = exec(ok);
            assertEquals(0, run.exit, run.out);
            Pattern line = Pattern.compile("frame seq=(\\d+) t_us=(\\d+) shape=\\((\\d+), (\\d+)\\) dtype=uint8 .*");
            List<String> frames = run.out.lines().filter(l -> l.startsWith("frame ")).toList();
            assertEquals(4, frames.size(), run.out);
            long previousT = -1;
            for (String f : frames) {
                Matcher m = line.matcher(f);
                assertTrue(m.matches(), f);
                assertEquals(H, Integer.parseInt(m.group(3)));
                assertEquals(W, Integer.parseInt(m.group(4)));
                long t = Long.parseLong(m.group(2));
                if (previousT >= 0) {
                    assertEquals(100_000, t - previousT, "10 Hz decimated from 100 Hz: 100 ms apart");
                }
                previousT = t;
            }
            assertEquals(0, failures(node));

            Run refused = exec(common);
            assertEquals(3, refused.exit, refused.out);
            // OpenSSL's words for the node's alert (RFC 8446 section 6.2).
            assertTrue(refused.out.contains("TLS error: ") && refused.out.contains("ALERT"), refused.out);
            waitFor(() -> failures(node) == 1);
        }
    }

    private record Run(int exit, String out) {
    }

    private static Run exec(List<String> command) throws Exception {
        ProcessBuilder pb = new ProcessBuilder(command).redirectErrorStream(true);
        pb.environment().put("PYTHONPATH", gen.toString());
        Process p = pb.start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        if (!p.waitFor(60, TimeUnit.SECONDS)) {
            p.destroyForcibly();
            throw new AssertionError("timed out: " + command);
        }
        return new Run(p.exitValue(), out);
    }
}
