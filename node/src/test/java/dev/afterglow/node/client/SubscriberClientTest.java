package dev.afterglow.node.client;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.google.protobuf.ByteString;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.net.Socket;
import java.net.SocketTimeoutException;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * The subscriber client against a scripted peer on loopback: a read timeout in the middle of a
 * frame must not lose the stream's place (the next call finishes that frame, and the one after
 * starts cleanly); a corrupt length prefix is refused instead of allocating it.
 */
@Timeout(value = 20, unit = TimeUnit.SECONDS)
class SubscriberClientTest {

    private static byte[] delimitedFrame(long sequence, byte[] pixels) throws IOException {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        Envelope.newBuilder().setSchemaVersion(SensorClient.SCHEMA_VERSION)
                .setIntensityFrame(IntensityFrame.newBuilder().setSensorId("yard").setSequence(sequence)
                        .setFormat(PixelFormat.PIXEL_FORMAT_GRAY8).setWidth(320).setHeight(pixels.length / 320)
                        .setPixels(ByteString.copyFrom(pixels)))
                .build().writeDelimitedTo(out);
        return out.toByteArray();
    }

    @Test
    void shouldFinishAFrameAfterATimeoutInsideIt() throws Exception {
        byte[] pixels = new byte[320 * 240];
        new SplittableRandom(5).nextBytes(pixels);
        byte[] first = delimitedFrame(1, pixels);
        byte[] second = delimitedFrame(2, pixels);
        try (ServerSocket server = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
            Thread peer = new Thread(() -> {
                try (Socket s = server.accept()) {
                    Envelope.parseDelimitedFrom(s.getInputStream()); // the subscribe request
                    OutputStream out = s.getOutputStream();
                    out.write(first, 0, 3); // inside the length prefix and the first bytes
                    out.flush();
                    Thread.sleep(400);
                    out.write(first, 3, first.length / 2);
                    out.flush();
                    Thread.sleep(400);
                    out.write(first, 3 + first.length / 2, first.length - 3 - first.length / 2);
                    out.write(second);
                    out.flush();
                    Thread.sleep(500);
                } catch (IOException | InterruptedException e) {
                    // the client closed first
                }
            });
            peer.start();
            try (SubscriberClient client = SubscriberClient.connect("127.0.0.1", server.getLocalPort(), "yard", 0,
                    PixelFormat.PIXEL_FORMAT_GRAY8)) {
                client.setTimeoutMillis(100);
                int timeouts = 0;
                IntensityFrame got = null;
                while (got == null) {
                    try {
                        got = client.next();
                    } catch (SocketTimeoutException e) {
                        timeouts++;
                    }
                }
                assertTrue(timeouts >= 2, "timeouts " + timeouts);
                assertEquals(1, got.getSequence());
                assertArrayEquals(pixels, got.getPixels().toByteArray());
                IntensityFrame next = client.next();
                assertEquals(2, next.getSequence());
                assertArrayEquals(pixels, next.getPixels().toByteArray());
            }
            peer.join();
        }
    }

    @Test
    void shouldRefuseALengthPrefixBeyondTheLimit() throws Exception {
        try (ServerSocket server = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
            Thread peer = new Thread(() -> {
                try (Socket s = server.accept()) {
                    Envelope.parseDelimitedFrom(s.getInputStream());
                    // Varint FF FF FF FF 01 = 2^29 - 1 = 536870911 (protobuf base-128 varint encoding), above 256 MiB.
                    s.getOutputStream().write(new byte[] {(byte) 0xFF, (byte) 0xFF, (byte) 0xFF, (byte) 0xFF, 0x01});
                    s.getOutputStream().flush();
                    Thread.sleep(500);
                } catch (IOException | InterruptedException e) {
                    // the client closed first
                }
            });
            peer.start();
            try (SubscriberClient client = SubscriberClient.connect("127.0.0.1", server.getLocalPort(), "yard", 0,
                    PixelFormat.PIXEL_FORMAT_GRAY8)) {
                IOException e = assertThrows(IOException.class, client::next);
                assertTrue(e.getMessage().contains("536870911 > 268435456"), e.getMessage());
            }
            peer.join();
        }
    }
}
