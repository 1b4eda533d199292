package dev.afterglow.node.hostile;

import static org.junit.jupiter.api.Assertions.assertAll;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.ObjectMapper;
import dev.afterglow.proto.v1.Envelope;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.DisplayName;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.extension.RegisterExtension;

/**
 * Issue item 7: every new unlisted sensor id cost about 14 MB whatever its geometry, was never
 * freed and had no cap. A node with the default limits (no limit keys in its configuration, so
 * this runs against any version of the node) gets 60 hellos for new sensor ids while a legitimate
 * sensor streams; at most {@code limits.max-sensors} (16 by default) sensors may be known at once,
 * and every hello beyond gets ErrorReport {@code limit}.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
class SensorFloodTest {
    static final double BUDGET_MS = 1000;
    static final String YAML = """
            listen: {address: 127.0.0.1, ingest-tcp-port: 0, ingest-udp-port: 0, subscriber-port: 0, http-port: 0}
            sensor-defaults: {frame-rate-hz: 100, latency-budget-ms: %s}
            """.formatted(BUDGET_MS);
    /** The contract's default of {@code limits.max-sensors}. */
    static final int MAX_SENSORS = 16;
    static final int ATTACK_SENSORS = 60;

    @RegisterExtension
    static final NodeFixture FIXTURE = new NodeFixture(YAML, 128, BUDGET_MS);

    @Test
    @DisplayName("item 7: hellos for 60 new sensor ids: at most max-sensors are known, the rest get ErrorReport limit")
    void shouldCapUnlistedSensorsAtMaxSensors() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = LegitRun.start(FIXTURE, FIXTURE.freshId("legit"), LegitSensor.Transport.TCP, null)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            List<String> wrongAnswers = new ArrayList<>();
            int refused = 0;
            int accepted = 0;
            // 30 connections from each of two addresses: under any per-address connection limit.
            try (ConnectionHerd herd = new ConnectionHerd(node.ingestTcpPort, ATTACK_SENSORS, 2, 30)) {
                for (int i = 0; i < ATTACK_SENSORS; i++) {
                    herd.send(i, Wire.delimited(Wire.hello(FIXTURE.freshId("flood"), 8, 8, null)));
                }
                Thread.sleep(2_000);
                for (ConnectionHerd.Conn c : herd.conns) {
                    byte[] got = c.receivedBytes();
                    if (got.length == 0 && !c.closed()) {
                        accepted++;
                        continue;
                    }
                    List<Envelope> answers = Wire.readAll(got);
                    if (c.closed() && answers.size() == 1 && answers.get(0).hasError()
                            && answers.get(0).getError().getCode().equals("limit")) {
                        refused++;
                    } else {
                        wrongAnswers.add((c.closed() ? "closed" : "open") + " after " + answers);
                    }
                }
            }
            Thread.sleep(2_500);
            legit.finish(from, legit.nowUs());
            int sensorsKnown = new ObjectMapper().readTree(RawHttp.get(node.httpPort, "/status", 2_000).body()).path("sensors").size();
            int acceptedFinal = accepted;
            int refusedFinal = refused;
            assertAll(legit::assertUnharmed,
                    () -> assertTrue(wrongAnswers.isEmpty(), "hellos answered otherwise than accepted or ErrorReport limit: "
                            + wrongAnswers.subList(0, Math.min(5, wrongAnswers.size())) + " (" + wrongAnswers.size() + ")"),
                    () -> assertTrue(acceptedFinal <= MAX_SENSORS - 1, acceptedFinal + " flood sensors accepted beside the legitimate one"),
                    () -> assertEquals(ATTACK_SENSORS - acceptedFinal, refusedFinal, "hellos refused with limit"),
                    () -> assertEquals(refusedFinal, legit.nodeDelta("afterglow_sensors_refused_total"), "afterglow_sensors_refused_total"),
                    () -> assertTrue(sensorsKnown <= MAX_SENSORS, "/status lists " + sensorsKnown + " sensors"));
        }
    }
}
