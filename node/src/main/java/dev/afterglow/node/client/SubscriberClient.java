package dev.afterglow.node.client;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Region;
import dev.afterglow.proto.v1.Subscribe;
import java.io.BufferedInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.net.Socket;

/**
 * Subscribes to one sensor's frames over TCP and reads them one by one. Blocking; one thread.
 * With {@link ClientTls} the connection uses TLS.
 * A read timeout ({@link #setTimeoutMillis}) may strike in the middle of a frame: what was read so
 * far is kept, and the next {@link #next()} carries on from there.
 *
 * <pre>
 * try (SubscriberClient s = SubscriberClient.connect("127.0.0.1", 7303, "dock-cam", 10, PixelFormat.PIXEL_FORMAT_GRAY8)) {
 *     IntensityFrame f = s.next();
 * }
 * </pre>
 */
public final class SubscriberClient implements AutoCloseable {
    /** Largest message accepted from the node; a longer length prefix means the stream is corrupt. */
    public static final int MAX_MESSAGE_BYTES = 256 << 20;

    private final Socket socket;
    private final InputStream in;
    // A message in progress, kept across read timeouts: the length prefix so far, then the body.
    private int prefixValue;
    private int prefixShift;
    private byte[] body;
    private int bodyFilled;

    private SubscriberClient(Socket socket) throws IOException {
        this.socket = socket;
        this.in = new BufferedInputStream(socket.getInputStream(), 1 << 16);
    }

    /** Connects and subscribes to the whole sensor at full resolution. */
    public static SubscriberClient connect(String host, int port, String sensorId, double rateHz, PixelFormat format)
            throws IOException {
        return connect(host, port, Subscribe.newBuilder().setSensorId(sensorId).setRateHz((float) rateHz).setFormat(format).build());
    }

    /** Connects over TLS (unless {@code tls} is null) and subscribes to the whole sensor at full resolution. */
    public static SubscriberClient connect(String host, int port, String sensorId, double rateHz, PixelFormat format,
            ClientTls tls) throws IOException {
        return connect(host, port, Subscribe.newBuilder().setSensorId(sensorId).setRateHz((float) rateHz).setFormat(format).build(), tls);
    }

    /** Connects and sends a full subscribe request (region, downscale). */
    public static SubscriberClient connect(String host, int port, Subscribe request) throws IOException {
        return connect(host, port, request, null);
    }

    /** Connects (over TLS unless {@code tls} is null) and sends a full subscribe request. */
    public static SubscriberClient connect(String host, int port, Subscribe request, ClientTls tls) throws IOException {
        Socket s = ClientTls.open(host, port, tls);
        SubscriberClient c = new SubscriberClient(s);
        Envelope.newBuilder().setSchemaVersion(SensorClient.SCHEMA_VERSION).setSubscribe(request).build()
                .writeDelimitedTo(s.getOutputStream());
        s.getOutputStream().flush();
        return c;
    }

    /** A subscribe request for a region at a downscale. */
    public static Subscribe request(String sensorId, double rateHz, PixelFormat format, int x, int y, int w, int h, int downscale) {
        return Subscribe.newBuilder().setSensorId(sensorId).setRateHz((float) rateHz).setFormat(format)
                .setRegion(Region.newBuilder().setX(x).setY(y).setWidth(w).setHeight(h)).setDownscale(downscale).build();
    }

    /** Sets how long {@link #next()} waits before failing with a timeout, in milliseconds (0: forever). */
    public void setTimeoutMillis(int millis) throws IOException {
        socket.setSoTimeout(millis);
    }

    /**
     * Reads the next frame.
     *
     * @throws RefusedException if the node answered with an error report
     * @throws java.io.EOFException if the node closed the connection
     */
    public IntensityFrame next() throws IOException {
        Envelope e = Envelope.parseFrom(readMessage());
        if (e.hasError()) {
            throw new RefusedException(e.getError().getCode(), e.getError().getMessage());
        }
        if (!e.hasIntensityFrame()) {
            throw new IOException("unexpected " + e.getBodyCase() + " from node");
        }
        return e.getIntensityFrame();
    }

    /** One length-prefixed message; a timeout leaves the progress in the fields for the next call. */
    private byte[] readMessage() throws IOException {
        while (body == null) {
            int b = in.read();
            if (b < 0) {
                throw new java.io.EOFException(prefixShift == 0 ? "node closed the connection"
                        : "node closed the connection inside a length prefix");
            }
            prefixValue |= (b & 0x7F) << prefixShift;
            prefixShift += 7;
            if ((b & 0x80) == 0) {
                if (prefixValue < 0 || prefixValue > MAX_MESSAGE_BYTES) {
                    throw new IOException("message length " + (prefixValue & 0xFFFFFFFFL) + " > " + MAX_MESSAGE_BYTES);
                }
                body = new byte[prefixValue];
                bodyFilled = 0;
                prefixValue = 0;
                prefixShift = 0;
            } else if (prefixShift > 28) {
                throw new IOException("malformed length prefix");
            }
        }
        while (bodyFilled < body.length) {
            int n = in.read(body, bodyFilled, body.length - bodyFilled);
            if (n < 0) {
                throw new java.io.EOFException("node closed the connection inside a message");
            }
            bodyFilled += n;
        }
        byte[] message = body;
        body = null;
        return message;
    }

    @Override
    public void close() throws IOException {
        socket.close();
    }

    /** The node refused the request; {@link #code()} says why. */
    public static final class RefusedException extends IOException {
        private final String code;

        public RefusedException(String code, String message) {
            super(code + ": " + message);
            this.code = code;
        }

        public String code() {
            return code;
        }
    }
}
