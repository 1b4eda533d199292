package dev.afterglow.node.hostile;

import static org.junit.jupiter.api.Assertions.assertEquals;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.ErrorReport;
import java.io.EOFException;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.DatagramPacket;
import java.net.DatagramSocket;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.net.SocketException;
import java.net.SocketTimeoutException;
import java.net.UnknownHostException;

/**
 * Raw sockets of an attacker. An attacker connects from its own loopback address 127.0.0.N
 * (N >= 2; Linux routes all of 127.0.0.0/8 to the loopback interface), so per-address limits the
 * node applies to it never fall on the legitimate peers, which use 127.0.0.1.
 */
final class Attacker {
    private Attacker() {
    }

    /** 127.0.0.n. */
    static InetAddress address(int n) {
        try {
            return InetAddress.getByAddress(new byte[] {127, 0, 0, (byte) n});
        } catch (UnknownHostException e) {
            throw new IllegalStateException(e);
        }
    }

    /** A TCP connection from 127.0.0.n to the node's {@code port}. */
    static Socket connect(int n, int port) throws IOException {
        Socket s = new Socket();
        s.setTcpNoDelay(true);
        s.bind(new InetSocketAddress(address(n), 0));
        s.connect(new InetSocketAddress(InetAddress.getLoopbackAddress(), port), 5_000);
        return s;
    }

    /** Writes the envelopes, each behind its varint length prefix, and flushes. */
    static void send(Socket s, Envelope... envelopes) throws IOException {
        OutputStream out = s.getOutputStream();
        for (Envelope e : envelopes) {
            out.write(Wire.delimited(e));
        }
        out.flush();
    }

    /** One datagram from 127.0.0.n to the node's UDP port. */
    static void datagram(int n, int port, byte[] payload) throws IOException {
        try (DatagramSocket d = new DatagramSocket(new InetSocketAddress(address(n), 0))) {
            d.send(new DatagramPacket(payload, payload.length, new InetSocketAddress(InetAddress.getLoopbackAddress(), port)));
        }
    }

    /**
     * The node must answer on {@code s} with an {@code ErrorReport} of this code and then close the
     * connection, each within {@code millis}.
     */
    static ErrorReport expectRefusal(Socket s, String code, int millis) throws IOException {
        s.setSoTimeout(millis);
        InputStream in = s.getInputStream();
        Envelope e;
        try {
            e = Wire.read(in, 1 << 20);
        } catch (SocketTimeoutException t) {
            throw new AssertionError("the node did not answer the attacker within " + millis + " ms (expected ErrorReport " + code + ")");
        } catch (EOFException | SocketException closed) {
            throw new AssertionError("the node closed the attacker's connection without an ErrorReport (expected " + code + "): " + closed);
        }
        if (!e.hasError()) {
            throw new AssertionError("the node answered the attacker with " + e.getBodyCase() + ", expected ErrorReport " + code);
        }
        assertEquals(code, e.getError().getCode(), "ErrorReport code; message: " + e.getError().getMessage());
        if (!closedWithin(s, millis)) {
            throw new AssertionError("the node left the attacker's connection open after ErrorReport " + code);
        }
        return e.getError();
    }

    /** True if the node closes (or resets) {@code s} within {@code millis}; bytes it sends meanwhile are skipped. */
    static boolean closedWithin(Socket s, int millis) throws IOException {
        long deadline = System.nanoTime() + millis * 1_000_000L;
        InputStream in = s.getInputStream();
        byte[] skip = new byte[8192];
        while (true) {
            long left = (deadline - System.nanoTime()) / 1_000_000;
            if (left <= 0) {
                return false;
            }
            s.setSoTimeout((int) left);
            try {
                if (in.read(skip) < 0) {
                    return true;
                }
            } catch (SocketTimeoutException t) {
                return false;
            } catch (SocketException reset) {
                return true;
            }
        }
    }
}
