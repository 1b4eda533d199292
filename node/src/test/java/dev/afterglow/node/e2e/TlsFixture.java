package dev.afterglow.node.e2e;

import static dev.afterglow.node.e2e.StreamingEndToEndTest.paceRealTime;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.ClientTls;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.tls.TestPki;
import java.io.IOException;
import java.nio.file.Path;
import java.util.List;

/** Certificates, node configuration and a streaming sensor for the TLS end-to-end tests. */
final class TlsFixture {
    static final int W = 64;
    static final int H = 48;
    static final String CHAIN = "refractory(period=1ms) | background-activity(window=10ms) | high-pass(cutoff=3rad/s, contrast=0.2)";
    /** Every listener. */
    static final String ALL = "[ingest, subscribers, http]";

    final TestPki pki;
    /** Trusts the node's CA, presents no certificate. */
    final ClientTls trusted;
    /** Trusts the node's CA and presents a client certificate signed by it. */
    final ClientTls withCertificate;

    TlsFixture(Path dir) throws Exception {
        pki = TestPki.create(dir);
        trusted = ClientTls.trusting(pki.caCert);
        withCertificate = trusted.withClientCertificate(pki.clientCert, pki.clientKey);
    }

    /** A node with TLS on {@code listeners}, asking for client certificates if {@code clientCertificates}; sensor "belt". */
    NodeConfig config(boolean clientCertificates, String listeners) {
        return NodeConfig.parse("""
                listen: {ingest-tcp-port: 0, ingest-udp-port: -1, subscriber-port: 0, http-port: 0}
                tls:
                  cert-file: '%s'
                  key-file: '%s'
                  client-ca-file: '%s'
                  listeners: %s
                sensors:
                  - {id: belt, width: %d, height: %d, chain: "%s", frame-rate-hz: 100, latency-budget-ms: 5000}
                """.formatted(pki.serverCert, pki.serverKey, clientCertificates ? pki.caCert : "", listeners, W, H, CHAIN),
                "test");
    }

    static long failures(AfterglowNode node) {
        return node.counters().get(NodeCounter.TLS_HANDSHAKE_FAILURES);
    }

    /** Streams sensor "belt" in real time (null tls: plain TCP) from a daemon thread until the node goes away (20 s at most). */
    static Thread feed(AfterglowNode node, ClientTls tls) {
        List<EventBatch> packets = SceneEvents.packets(W, H, 20_000_000, 2_000, 5);
        Thread t = new Thread(() -> {
            try (SensorClient s = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), "belt", W, H, false, tls)) {
                long start = System.nanoTime();
                for (EventBatch b : packets) {
                    paceRealTime(start, b.timeBaseUs + 2_000);
                    s.sendEvents(b);
                    s.flush();
                }
            } catch (IOException | InterruptedException e) {
                // the test ends the node while the sensor still streams
            }
        }, "tls-test-sensor");
        t.setDaemon(true);
        t.start();
        return t;
    }
}
