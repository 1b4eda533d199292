package dev.afterglow.node.hostile;

import static org.junit.jupiter.api.Assertions.assertAll;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.Envelope;
import java.net.Socket;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.DisplayName;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.extension.RegisterExtension;

/**
 * Issue item 7, the geometry side: a sensor of the largest geometry {@code limits.max-sensor-pixels}
 * allows by default (2048 x 2048) holds about 20 bytes per pixel of state (README, "How cost
 * grows"), some 80 MB, so five of them exceed the node's 256 MB heap long before
 * {@code max-sensors}. Each hello must be either accepted or refused with ErrorReport
 * {@code limit} (the node refuses sensors it has no memory for), and the legitimate sensor must
 * not notice. Default limits only, so this runs against any version of the node.
 */
@Timeout(value = 60, unit = TimeUnit.SECONDS, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
class LargeSensorFloodTest {
    static final double BUDGET_MS = 1000;
    @RegisterExtension
    static final NodeFixture FIXTURE = new NodeFixture(SensorFloodTest.YAML, 128, BUDGET_MS);

    @Test
    @DisplayName("item 7: five hellos of 2048 x 2048 with events: each accepted or refused with limit, and the node keeps its memory")
    void shouldRefuseLargeSensorsTheNodeHasNoMemoryFor() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = LegitRun.start(FIXTURE, FIXTURE.freshId("legit"), LegitSensor.Transport.TCP, null)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            List<Socket> held = new ArrayList<>();
            List<String> wrong = new ArrayList<>();
            int refused = 0;
            try {
                for (int i = 0; i < 5; i++) {
                    Socket s = Attacker.connect(2, node.ingestTcpPort);
                    held.add(s);
                    String id = FIXTURE.freshId("large");
                    // A few events across the sensor, so state allocated on first use is allocated.
                    byte[] events = new byte[4 * 8];
                    int[][] at = {{0, 0}, {2047, 0}, {0, 2047}, {2047, 2047}};
                    for (int k = 0; k < 4; k++) {
                        System.arraycopy(Wire.event(k, at[k][0], at[k][1], true), 0, events, k * 8, 8);
                    }
                    Attacker.send(s, Wire.hello(id, 2048, 2048, null), Wire.packet(id, 0, 1_000, 4, events));
                    s.setSoTimeout(1_000);
                    try {
                        Envelope e = Wire.read(s.getInputStream(), 1 << 20);
                        if (e.hasError() && e.getError().getCode().equals("limit")) {
                            refused++;
                        } else {
                            wrong.add(id + ": " + e);
                        }
                    } catch (java.net.SocketTimeoutException accepted) {
                        // no answer: accepted
                    } catch (java.io.IOException closed) {
                        wrong.add(id + ": closed without an ErrorReport (" + closed + ")");
                    }
                }
                Thread.sleep(2_500);
                legit.finish(from, legit.nowUs());
            } finally {
                for (Socket s : held) {
                    s.close();
                }
            }
            int refusedFinal = refused;
            System.out.println("large sensors: " + refused + " of 5 refused with limit");
            assertAll(legit::assertUnharmed,
                    () -> assertTrue(wrong.isEmpty(), "hellos neither accepted nor refused with limit: " + wrong),
                    () -> assertTrue(legit.nodeDelta("afterglow_sensors_refused_total") == refusedFinal,
                            "afterglow_sensors_refused_total moved by " + legit.nodeDelta("afterglow_sensors_refused_total")
                                    + ", hellos refused " + refusedFinal));
        }
    }
}
