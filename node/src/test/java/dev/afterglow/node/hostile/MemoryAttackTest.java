package dev.afterglow.node.hostile;

import static org.junit.jupiter.api.Assertions.assertAll;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Subscribe;
import java.io.IOException;
import java.io.OutputStream;
import java.net.Socket;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.DisplayName;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.extension.RegisterExtension;

/**
 * Issue item 8: subscribers that never read and connections holding half-sent messages ran the
 * node's direct-buffer pool out, which it shares with ingest, so the legitimate sensor's
 * connection was closed and {@code /metrics} timed out. The node runs with the default limits (no
 * limit keys, so this runs against any version of the node) and {@code -XX:MaxDirectMemorySize=256m}:
 * the 60 stalled subscribers (8 MiB of unsent frames each by default) or 110 x 3 MiB of
 * unfinished messages are well above it.
 */
@Timeout(value = 90, unit = TimeUnit.SECONDS, threadMode = Timeout.ThreadMode.SEPARATE_THREAD)
class MemoryAttackTest {
    static final double BUDGET_MS = 1000;
    static final int DIRECT_MB = 256;
    @RegisterExtension
    static final NodeFixture FIXTURE = new NodeFixture(SensorFloodTest.YAML, DIRECT_MB, BUDGET_MS);

    static final int HOLD_MS = 3_000;
    /** Bytes of the unfinished first message each attacking connection holds. */
    static final int PARTIAL_BYTES = 3 << 20;

    @Test
    @DisplayName("item 8: 60 subscribers that never read do not exhaust memory shared with ingest")
    void shouldKeepIngestWhileSixtySubscribersNeverRead() throws Exception {
        HostileNode node = FIXTURE.node();
        try (LegitRun legit = LegitRun.start(FIXTURE, FIXTURE.freshId("legit"), LegitSensor.Transport.TCP, null)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            // 30 from each of two addresses, 4 KiB receive windows, every frame as 32-bit floats: never read.
            try (ConnectionHerd herd = new ConnectionHerd(node.subscriberPort, 60, 2, 30, false, 4096)) {
                herd.sendAll(Wire.delimited(Envelope.newBuilder().setSchemaVersion(Wire.SCHEMA).setSubscribe(Subscribe.newBuilder()
                        .setSensorId(legit.sensor.id).setRateHz(0).setFormat(PixelFormat.PIXEL_FORMAT_LOG_F32)).build()));
                Thread.sleep(HOLD_MS);
            }
            Thread.sleep(1_000);
            legit.finish(from, legit.nowUs());
            assertAll(legit::assertUnharmed,
                    () -> assertTrue(legit.sensorDelta("afterglow_frames_missed_total") > 0,
                            "the stalled subscribers missed frames (the attack really stalled them)"));
        }
    }

    @Test
    @DisplayName("item 8: 110 connections from one address each holding 3 MiB of an unfinished message")
    void shouldKeepIngestWhileConnectionsHoldPartialMessagesFromOneAddress() throws Exception {
        try (LegitRun legit = LegitRun.start(FIXTURE, FIXTURE.freshId("legit"), LegitSensor.Transport.TCP, null)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            Partial partial = Partial.hold(FIXTURE.node().ingestTcpPort, 110, 2, 110);
            Thread.sleep(HOLD_MS);
            partial.close();
            Thread.sleep(1_000);
            legit.finish(from, legit.nowUs());
            assertAll(legit::assertUnharmed,
                    // A first message is a hello and may not exceed 64 KiB, so a 3 MiB prefix is refused
                    // as oversized at once; connections beyond limits.max-connections-per-address (32) are
                    // refused outright. Either way the node holds none of it.
                    () -> assertTrue(legit.nodeDelta("afterglow_ingest_oversized_messages_total")
                            + legit.nodeDelta("afterglow_connections_refused_total") >= 110 - 32,
                            "oversized " + legit.nodeDelta("afterglow_ingest_oversized_messages_total") + ", refused "
                                    + legit.nodeDelta("afterglow_connections_refused_total") + "; " + partial));
        }
    }

    @Test
    @DisplayName("item 8: 112 connections from four addresses (28 each) each holding 3 MiB of an unfinished message")
    void shouldKeepIngestWhileConnectionsHoldPartialMessagesFromFourAddresses() throws Exception {
        try (LegitRun legit = LegitRun.start(FIXTURE, FIXTURE.freshId("legit"), LegitSensor.Transport.TCP, null)) {
            long from = legit.startWindow();
            Thread.sleep(500);
            Partial partial = Partial.hold(FIXTURE.node().ingestTcpPort, 112, 2, 28);
            Thread.sleep(HOLD_MS);
            partial.close();
            Thread.sleep(1_000);
            legit.finish(from, legit.nowUs());
            System.out.println(partial);
            legit.assertUnharmed();
        }
    }

    /** Connections that each send a length prefix of {@link #PARTIAL_BYTES} and all but one byte of the message. */
    static final class Partial implements AutoCloseable {
        final List<Socket> sockets = new ArrayList<>();
        final List<Thread> writers = new ArrayList<>();
        final AtomicInteger written = new AtomicInteger();
        final AtomicInteger failed = new AtomicInteger();

        static Partial hold(int port, int count, int firstAddress, int perAddress) throws IOException {
            Partial p = new Partial();
            byte[] prefix = Wire.varint(PARTIAL_BYTES);
            byte[] body = new byte[PARTIAL_BYTES - 1];
            for (int i = 0; i < count; i++) {
                Socket s;
                try {
                    s = Attacker.connect(firstAddress + i / perAddress, port);
                } catch (IOException refused) {
                    p.failed.incrementAndGet();
                    continue;
                }
                p.sockets.add(s);
                Thread t = new Thread(() -> {
                    try {
                        OutputStream out = s.getOutputStream();
                        out.write(prefix);
                        out.write(body);
                        out.flush();
                        p.written.incrementAndGet();
                    } catch (IOException closedByNode) {
                        p.failed.incrementAndGet();
                    }
                }, "partial-message-" + i);
                t.setDaemon(true);
                t.start();
                p.writers.add(t);
            }
            return p;
        }

        @Override
        public void close() throws IOException, InterruptedException {
            for (Socket s : sockets) {
                s.close();
            }
            for (Thread t : writers) {
                t.join(2_000);
            }
        }

        @Override
        public String toString() {
            return "partial messages: " + sockets.size() + " connected, " + written.get() + " fully written, " + failed.get()
                    + " refused or closed by the node";
        }
    }
}
