package dev.afterglow.node.e2e;

import static dev.afterglow.node.e2e.StreamingEndToEndTest.paceRealTime;
import static dev.afterglow.node.e2e.StreamingEndToEndTest.waitFor;
import static dev.afterglow.node.e2e.TlsFixture.ALL;
import static dev.afterglow.node.e2e.TlsFixture.CHAIN;
import static dev.afterglow.node.e2e.TlsFixture.H;
import static dev.afterglow.node.e2e.TlsFixture.W;
import static dev.afterglow.node.e2e.TlsFixture.failures;
import static dev.afterglow.node.e2e.TlsFixture.feed;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.ClientTls;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.tls.HandshakeFailure;
import dev.afterglow.node.tls.TestPki;
import dev.afterglow.proto.v1.ClockDescription;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.SensorHello;
import java.io.IOException;
import java.net.Socket;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import javax.net.ssl.SSLException;
import javax.net.ssl.SSLHandshakeException;
import javax.net.ssl.SSLSocket;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * TLS on a real node on loopback, with the Java clients: the legitimate path (a sensor streams over
 * TLS and a subscriber receives frames equal to the same chain run in-process), and each refusal
 * (plain TCP on a TLS port, a client that does not trust the node, a missing, expired or foreign
 * client certificate) closing the connection, counted in afterglow_tls_handshake_failures_total,
 * logged once per kind, and seen by the client as a handshake error. Certificates are made at test
 * time ({@link TestPki}).
 */
@Timeout(value = 120, unit = TimeUnit.SECONDS)
class TlsEndToEndTest {
    @TempDir
    static Path dir;
    static TlsFixture fixture;
    private TlsLog log;

    @BeforeAll
    static void certificates() throws Exception {
        fixture = new TlsFixture(dir);
    }

    @BeforeEach
    void captureLog() {
        log = new TlsLog();
    }

    @AfterEach
    void releaseLog() {
        log.close();
    }

    @Test
    void shouldStreamAndDeliverFramesOverTlsEqualToInProcessChain() throws Exception {
        List<EventBatch> packets = SceneEvents.packets(W, H, 400_000, 1_000, 21);
        try (AfterglowNode node = AfterglowNode.start(fixture.config(false, ALL));
                SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "belt", 0,
                        PixelFormat.PIXEL_FORMAT_LOG_F32, fixture.trusted)) {
            sub.setTimeoutMillis(20_000);
            waitFor(() -> node.publisher().count() == 1);
            try (SensorClient sensor = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "belt", W, H, false, fixture.trusted)) {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    paceRealTime(start, b.timeBaseUs + 1_000);
                    sensor.sendEvents(b);
                    sensor.flush();
                }
            }
            long lastEventUs = packets.get(packets.size() - 1).timeUs(packets.get(packets.size() - 1).size - 1);
            int expectedFrames = (int) (lastEventUs / 10_000);
            List<IntensityFrame> frames = new ArrayList<>();
            for (int i = 0; i < expectedFrames; i++) {
                frames.add(sub.next());
            }
            for (int f = 0; f < frames.size(); f++) {
                assertEquals(10_000L * (f + 1), frames.get(f).getFrameTimeUs(), "frame " + f + " time");
            }
            StreamingEndToEndTest.assertEqualToInProcessChain(CHAIN, packets, frames);
            long sent = packets.stream().mapToLong(b -> b.size).sum();
            var counters = node.sensors().get("belt").counters();
            waitFor(() -> counters.get(NodeCounter.EVENTS_TCP) == sent);
            assertEquals(packets.size(), counters.get(NodeCounter.PACKETS_TCP));

            // The connections really were TLS 1.3 (RFC 8446), with the node's certificate.
            try (Socket s = ClientTls.open("127.0.0.1", node.ingestTcpPort(), fixture.trusted)) {
                SSLSocket tls = assertInstanceOf(SSLSocket.class, s);
                assertEquals("TLSv1.3", tls.getSession().getProtocol());
                assertEquals("CN=afterglow-node",
                        ((java.security.cert.X509Certificate) tls.getSession().getPeerCertificates()[0]).getSubjectX500Principal().getName());
            }
            assertEquals(0, failures(node));
            assertEquals(0, node.counters().get(NodeCounter.INTERNAL_ERRORS));
            assertEquals(List.of(), log.lines());
        }
    }

    @Test
    void shouldRefusePlainTcpOnATlsPortAndLogTheKindOnce() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(fixture.config(false, ALL))) {
            for (int i = 1; i <= 3; i++) {
                try (Socket s = new Socket("127.0.0.1", node.ingestTcpPort())) {
                    s.setSoTimeout(10_000);
                    Envelope.newBuilder().setSchemaVersion(1).setHello(SensorHello.newBuilder().setSensorId("intruder")
                            .setWidth(W).setHeight(H).setClock(ClockDescription.newBuilder().setSource("sensor").setTickNs(1000)))
                            .build().writeDelimitedTo(s.getOutputStream());
                    s.getOutputStream().flush();
                    // The node answers nothing a plain client could misread: end of stream, no reset.
                    assertEquals(0, s.getInputStream().readAllBytes().length);
                }
                int expected = i;
                waitFor(() -> failures(node) == expected);
            }
            assertNull(node.sensors().get("intruder"), "the plain-text hello never reached the ingest handler");
            assertEquals(1, log.count(HandshakeFailure.NOT_TLS.description()), String.join("\n", log.lines()));
            assertEquals(1, log.lines().size(), String.join("\n", log.lines()));
            assertEquals(0, node.counters().get(NodeCounter.INTERNAL_ERRORS));
            feed(node, fixture.trusted);
            assertLegitimatePathWorks(node, fixture.trusted);
        }
    }

    @Test
    void shouldRefuseAClientThatDoesNotTrustTheNode() throws Exception {
        ClientTls stranger = ClientTls.trusting(fixture.pki.otherCaCert);
        try (AfterglowNode node = AfterglowNode.start(fixture.config(false, ALL))) {
            SSLHandshakeException e = assertThrows(SSLHandshakeException.class,
                    () -> SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "intruder", W, H, false, stranger));
            assertTrue(e.getMessage().startsWith("TLS handshake with 127.0.0.1:" + node.ingestTcpPort() + " failed: "), e.getMessage());
            waitFor(() -> failures(node) == 1);
            assertEquals(1, log.count(HandshakeFailure.CLIENT_ABORTED.description()), String.join("\n", log.lines()));
            assertNull(node.sensors().get("intruder"));
            feed(node, fixture.trusted);
            assertLegitimatePathWorks(node, fixture.trusted);
        }
    }

    @Test
    void shouldRefuseMissingExpiredAndForeignClientCertificates() throws Exception {
        record Case(String name, ClientTls tls, HandshakeFailure kind) {
        }
        List<Case> cases = List.of(
                new Case("no certificate", fixture.trusted, HandshakeFailure.NO_CLIENT_CERTIFICATE),
                new Case("expired certificate", fixture.trusted.withClientCertificate(fixture.pki.expiredClientCert, fixture.pki.expiredClientKey),
                        HandshakeFailure.CLIENT_CERTIFICATE_EXPIRED),
                new Case("certificate of another CA", fixture.trusted.withClientCertificate(fixture.pki.otherClientCert, fixture.pki.otherClientKey),
                        HandshakeFailure.CLIENT_CERTIFICATE_UNTRUSTED));
        try (AfterglowNode node = AfterglowNode.start(fixture.config(true, ALL))) {
            feed(node, fixture.withCertificate);
            waitFor(() -> node.sensors().get("belt") != null);
            for (Case c : cases) {
                long before = failures(node);
                IOException e = assertThrows(IOException.class, () -> {
                    try (SubscriberClient s = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "belt", 10,
                            PixelFormat.PIXEL_FORMAT_GRAY8, c.tls)) {
                        s.setTimeoutMillis(10_000);
                        s.next();
                    }
                }, c.name);
                // The node's alert reached the client (the JDK's words for a TLS alert, RFC 8446 section 6).
                assertInstanceOf(SSLException.class, e, c.name + ": " + e);
                assertTrue(e.getMessage().startsWith("Received fatal alert: "), c.name + ": " + e);
                waitFor(() -> failures(node) == before + 1);
                assertEquals(1, log.count(c.kind.description()), c.name + "\n" + String.join("\n", log.lines()));
            }
            assertEquals(cases.size(), log.lines().size());

            // A sensor without a certificate: with TLS 1.3 its handshake ends before the node judges
            // it, so it learns of the refusal at a later write; the node never hears its hello.
            EventBatch one = SceneEvents.packets(W, H, 10_000, 1_000, 3).get(0);
            assertThrows(IOException.class, () -> {
                try (SensorClient s = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "intruder", W, H, false, fixture.trusted)) {
                    for (int i = 0; i < 1_000; i++) {
                        s.sendEvents(one);
                        s.flush();
                        Thread.sleep(10);
                    }
                }
            });
            waitFor(() -> failures(node) == cases.size() + 1);
            assertNull(node.sensors().get("intruder"));

            assertLegitimatePathWorks(node, fixture.withCertificate);
            assertEquals(cases.size() + 1, failures(node));
            assertEquals(0, node.counters().get(NodeCounter.INTERNAL_ERRORS));
        }
    }

    /** A subscriber with these settings (null: plain TCP) receives frames of "belt" from a sensor streaming already. */
    static void assertLegitimatePathWorks(AfterglowNode node, ClientTls subscriberTls) throws Exception {
        try (SubscriberClient s = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), "belt", 0,
                PixelFormat.PIXEL_FORMAT_GRAY8, subscriberTls)) {
            s.setTimeoutMillis(20_000);
            long previous = -1;
            for (int i = 0; i < 5; i++) {
                IntensityFrame f = s.next();
                assertEquals(W * H, f.getPixels().size());
                assertTrue(f.getFrameTimeUs() > previous);
                previous = f.getFrameTimeUs();
            }
        }
    }

    @Test
    void shouldLeaveListenersNotNamedInTlsListenersPlain() throws Exception {
        try (AfterglowNode node = AfterglowNode.start(fixture.config(false, "[http]"))) {
            feed(node, null);
            assertLegitimatePathWorks(node, null);
            assertEquals(0, failures(node));
            // ... while the HTTP port wants TLS.
            try (Socket s = new Socket("127.0.0.1", node.httpPort())) {
                s.getOutputStream().write("GET /health HTTP/1.1\r\nHost: 127.0.0.1\r\n\r\n".getBytes(java.nio.charset.StandardCharsets.US_ASCII));
                s.setSoTimeout(10_000);
                assertEquals(0, s.getInputStream().readAllBytes().length);
            }
            waitFor(() -> failures(node) == 1);
        }
    }
}
