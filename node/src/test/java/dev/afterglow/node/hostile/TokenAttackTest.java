package dev.afterglow.node.hostile;

import static org.junit.jupiter.api.Assertions.assertAll;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.net.Socket;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.DisplayName;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.extension.RegisterExtension;

/**
 * Issue items 4, 6 and 10 where sensors have tokens: a UDP sensor whose datagrams must be sealed
 * with its token cannot be blinded by forged datagrams, a connected TCP sensor cannot be taken
 * over without its token even where the configuration lets an authenticated newcomer replace a
 * connection, and no token is printed at start. The configuration uses the contract's sensor
 * tokens and {@code access.duplicate-sensor}; a node that predates them refuses it at start.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
class TokenAttackTest {
    static final double BUDGET_MS = 1000;
    static final String SEALED_TOKEN = "sealed-cam-secret-7d41e0b2";
    static final String TCP_TOKEN = "tcp-cam-secret-93c5aa10f7";
    static final String YAML = """
            listen: {address: 127.0.0.1, ingest-tcp-port: 0, ingest-udp-port: 0, subscriber-port: 0, http-port: 0}
            access: {duplicate-sensor: replace}
            sensor-defaults: {frame-rate-hz: 100, latency-budget-ms: %1$s}
            sensors:
              - {id: sealed-cam, width: 160, height: 120, frame-rate-hz: 100, latency-budget-ms: %1$s, token: "%2$s"}
              - {id: tcp-cam, width: 160, height: 120, frame-rate-hz: 100, latency-budget-ms: %1$s, token: "%3$s"}
            """.formatted(BUDGET_MS, SEALED_TOKEN, TCP_TOKEN);

    @RegisterExtension
    static final NodeFixture FIXTURE = new NodeFixture(YAML, 128, BUDGET_MS);

    @Test
    @DisplayName("item 4 (sealed): an unsealed and a wrongly sealed datagram with sequence near 2^63 are refused; the sealed sensor streams on")
    void shouldRefuseForgedDatagramsForSealedSensor() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = LegitRun.start(FIXTURE, "sealed-cam", LegitSensor.Transport.SEALED_UDP, SEALED_TOKEN)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            byte[] inner = Wire.packet("sealed-cam", Long.MAX_VALUE - 7, legit.nowUs(), 1, Wire.event(0, 3, 3, true)).toByteArray();
            Attacker.datagram(2, node.ingestUdpPort, inner);
            Attacker.datagram(2, node.ingestUdpPort, LegitSensor.seal("sealed-cam", inner, "not-the-sensor-token-0000"));
            Thread.sleep(2_500);
            legit.finish(from, legit.nowUs());
            assertAll(legit::assertUnharmed,
                    () -> assertEquals(2, legit.nodeDelta("afterglow_ingest_udp_refused_total"), "datagrams refused"));
        }
    }

    @Test
    @DisplayName("item 6 (tokens): hellos for a connected sensor without its token or with a wrong one are refused as unauthorized")
    void shouldRefuseTakeoverWithoutToken() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = LegitRun.start(FIXTURE, "tcp-cam", LegitSensor.Transport.TCP, TCP_TOKEN)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            var missing = Deferred.run(() -> {
                try (Socket s = Attacker.connect(2, node.ingestTcpPort)) {
                    Attacker.send(s, Wire.hello("tcp-cam", 160, 120, null));
                    Attacker.expectRefusal(s, "unauthorized", 2_000);
                }
            });
            var wrong = Deferred.run(() -> {
                try (Socket s = Attacker.connect(2, node.ingestTcpPort)) {
                    Attacker.send(s, Wire.hello("tcp-cam", 160, 120, "tcp-cam-secret-guessed-0000"));
                    Attacker.expectRefusal(s, "unauthorized", 2_000);
                }
            });
            Thread.sleep(2_500);
            legit.finish(from, legit.nowUs());
            assertAll(legit::assertUnharmed, missing, wrong,
                    () -> assertEquals(2, legit.nodeDelta("afterglow_auth_refused_total"), "hellos refused for their token"));
        }
    }

    @Test
    @DisplayName("item 10 (tokens): no sensor token is printed with the effective configuration")
    void shouldNotPrintSensorTokens() throws Exception {
        // An unlisted sensor: tcp-cam keeps its state across connections, and a second stream of it would restart its clock.
        try (LegitRun legit = LegitRun.start(FIXTURE, FIXTURE.freshId("legit"), LegitSensor.Transport.TCP, null)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            legit.finish(from, legit.nowUs());
            String printed = FIXTURE.node().output();
            assertAll(legit::assertUnharmed,
                    () -> assertFalse(printed.contains(SEALED_TOKEN) || printed.contains(TCP_TOKEN), "a sensor token was printed:\n" + printed),
                    () -> assertTrue(printed.contains("<redacted>"), "the tokens' places say <redacted>:\n" + printed));
        }
    }
}
