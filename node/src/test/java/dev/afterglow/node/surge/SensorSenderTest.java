package dev.afterglow.node.surge;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import java.net.DatagramPacket;
import java.net.DatagramSocket;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * A sender's datagrams as protobuf-java (the reference parser) reads them on a loopback socket:
 * consecutive sequence numbers, the plan's bytes under time bases one span apart, every event of the
 * phase, and a send log that answers for the spans sent.
 */
class SensorSenderTest {

    @Test
    @Timeout(value = 20, unit = TimeUnit.SECONDS)
    void shouldSendThePlanAsEnvelopesWithSequenceAndSpanTimeBases() throws Exception {
        SceneLoop loop = SceneLoop.generate(SceneKind.PARCEL_LINE, 64, 48, 7);
        long spanUs = 1000;
        PacketPlan plan = PacketPlan.of(loop, 20_000, spanUs);
        List<EventPacket> received = new ArrayList<>();
        SensorSender.Phase phase;
        SensorSender sender;
        try (DatagramSocket node = new DatagramSocket(new InetSocketAddress(InetAddress.getLoopbackAddress(), 0))) {
            node.setReceiveBufferSize(1 << 22);
            node.setSoTimeout(2_000);
            sender = SensorSender.udp("127.0.0.1", node.getLocalPort(), "surge-2", 2);
            try (sender) {
                phase = sender.run(plan, 300_000_000L, true, true);
                long events = 0;
                byte[] buffer = new byte[65_536];
                while (events < phase.events()) {
                    DatagramPacket d = new DatagramPacket(buffer, buffer.length);
                    node.receive(d);
                    EventPacket p = Envelope.parseFrom(Arrays.copyOf(d.getData(), d.getLength())).getEvents();
                    received.add(p);
                    events += p.getEventCount();
                }
            }
        }
        assertTrue(phase.spans() > 100, "spans " + phase.spans());
        assertEquals(phase.packets(), received.size());
        long events = 0;
        long previousBase = -1;
        for (int k = 0; k < received.size(); k++) {
            EventPacket p = received.get(k);
            assertEquals(k, p.getSequence());
            assertEquals("surge-2", p.getSensorId());
            assertEquals(8L * p.getEventCount(), p.getEvents().size());
            assertTrue(p.getEventCount() <= SensorSender.UDP_CHUNK_EVENTS);
            long offset = p.getTimeBaseUs() - phase.firstSensorUs();
            assertEquals(0, offset % spanUs, "time base " + p.getTimeBaseUs());
            assertTrue(p.getTimeBaseUs() > previousBase && p.getTimeBaseUs() < phase.endSensorUs());
            previousBase = p.getTimeBaseUs();
            events += p.getEventCount();
        }
        assertEquals(phase.events(), events);
        // Sensor time is host monotonic time: the paced phase starts at the host clock's microsecond.
        assertTrue(Math.abs(phase.firstSensorUs() - phase.startNs() / 1000) <= 1, phase.toString());
        assertEquals(phase.spans() * spanUs, phase.endSensorUs() - phase.firstSensorUs());

        // The send log: a span is handed to the socket once its sensor time has passed on the host clock.
        long t = phase.firstSensorUs() + 5 * spanUs + 3;
        long sent = sender.sentAtNanos(t);
        assertTrue(sent >= (phase.firstSensorUs() + 6 * spanUs) * 1000 - 1000 && sent <= phase.lastSendNs(), sent + " " + phase);
        assertTrue(sender.sentAtNanos(t + spanUs) > sent);
        assertEquals(-1, sender.sentAtNanos(phase.endSensorUs() + 1));
        assertTrue(sender.inWindow(phase.firstSensorUs()) && !sender.inWindow(phase.endSensorUs()));
    }
}
