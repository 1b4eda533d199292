package dev.afterglow.node.hostile;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.StandardSocketOptions;
import java.nio.ByteBuffer;
import java.nio.channels.SelectionKey;
import java.nio.channels.Selector;
import java.nio.channels.SocketChannel;
import java.util.ArrayList;
import java.util.List;

/**
 * Many attacker connections held open at once without a thread each: non-blocking channels on one
 * selector thread that records, per connection, what the node sent and when the node closed it.
 * Connections come from consecutive loopback addresses, {@code perAddress} from each.
 */
final class ConnectionHerd implements AutoCloseable {
    /** One connection and what happened to it. */
    static final class Conn {
        final SocketChannel channel;
        final ByteArrayOutputStream received = new ByteArrayOutputStream();
        final long openedNanos = System.nanoTime();
        volatile long closedNanos = -1;
        volatile String refusedAtOpen;
        int trickled;

        Conn(SocketChannel channel) {
            this.channel = channel;
        }

        boolean closed() {
            return closedNanos >= 0 || refusedAtOpen != null;
        }

        synchronized byte[] receivedBytes() {
            return received.toByteArray();
        }
    }

    final List<Conn> conns = new ArrayList<>();
    private final Selector selector;
    private final Thread poller;
    private volatile boolean running = true;

    /** Opens {@code count} connections to {@code port}, from 127.0.0.firstAddress on, {@code perAddress} each, and reads them. */
    ConnectionHerd(int port, int count, int firstAddress, int perAddress) throws IOException {
        this(port, count, firstAddress, perAddress, true, 0);
    }

    /**
     * Opens the connections; with {@code reading} false nothing is ever read from them (a peer that
     * stopped reading), and {@code receiveBufferBytes} > 0 sets a small receive window before connecting.
     */
    ConnectionHerd(int port, int count, int firstAddress, int perAddress, boolean reading, int receiveBufferBytes)
            throws IOException {
        selector = Selector.open();
        InetSocketAddress target = new InetSocketAddress(InetAddress.getLoopbackAddress(), port);
        for (int i = 0; i < count; i++) {
            SocketChannel ch = SocketChannel.open();
            ch.setOption(StandardSocketOptions.TCP_NODELAY, true);
            if (receiveBufferBytes > 0) {
                ch.setOption(StandardSocketOptions.SO_RCVBUF, receiveBufferBytes);
            }
            ch.bind(new InetSocketAddress(Attacker.address(firstAddress + i / perAddress), 0));
            Conn c = new Conn(ch);
            try {
                ch.connect(target);
                ch.configureBlocking(false);
            } catch (IOException e) {
                c.refusedAtOpen = e.toString();
            }
            conns.add(c);
        }
        for (Conn c : conns) {
            if (c.refusedAtOpen == null && reading) {
                c.channel.register(selector, SelectionKey.OP_READ, c);
            }
        }
        poller = new Thread(this::poll, "connection-herd");
        poller.setDaemon(true);
        poller.start();
    }

    private void poll() {
        ByteBuffer buf = ByteBuffer.allocate(64 << 10);
        while (running) {
            try {
                selector.select(100);
                for (SelectionKey key : selector.selectedKeys()) {
                    Conn c = (Conn) key.attachment();
                    buf.clear();
                    int n;
                    try {
                        n = c.channel.read(buf);
                    } catch (IOException reset) {
                        n = -1;
                    }
                    if (n < 0) {
                        c.closedNanos = System.nanoTime();
                        key.cancel();
                        c.channel.close();
                    } else if (n > 0) {
                        synchronized (c) {
                            c.received.write(buf.array(), 0, n);
                        }
                    }
                }
                selector.selectedKeys().clear();
            } catch (IOException | java.nio.channels.ClosedSelectorException e) {
                return;
            }
        }
    }

    /** Writes the next byte of {@code message} to every open connection, never its last byte (so it never completes). */
    void trickle(byte[] message) {
        for (Conn c : conns) {
            if (c.closed() || c.trickled >= message.length - 1) {
                continue;
            }
            try {
                if (c.channel.write(ByteBuffer.wrap(message, c.trickled, 1)) == 1) {
                    c.trickled++;
                }
            } catch (IOException e) {
                // closed by the node; the poller sees it
            }
        }
    }

    /** Writes {@code bytes} to connection {@code i} if it is open (a small write: whatever the socket takes). */
    void send(int i, byte[] bytes) {
        Conn c = conns.get(i);
        if (c.closed()) {
            return;
        }
        try {
            c.channel.write(ByteBuffer.wrap(bytes));
        } catch (IOException e) {
            // closed by the node
        }
    }

    /** Writes {@code bytes} to every open connection (small writes: whatever the socket takes). */
    void sendAll(byte[] bytes) {
        for (Conn c : conns) {
            if (c.closed()) {
                continue;
            }
            try {
                c.channel.write(ByteBuffer.wrap(bytes));
            } catch (IOException e) {
                // closed by the node
            }
        }
    }

    /** Connections the node has not closed (nor refused). */
    long open() {
        return conns.stream().filter(c -> !c.closed()).count();
    }

    /** Connections refused when opened. */
    long refusedAtOpen() {
        return conns.stream().filter(c -> c.refusedAtOpen != null).count();
    }

    @Override
    public void close() throws IOException, InterruptedException {
        running = false;
        selector.wakeup();
        poller.join(2_000);
        selector.close();
        for (Conn c : conns) {
            c.channel.close();
        }
    }
}
