package dev.afterglow.node.hostile;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Provenance;
import dev.afterglow.proto.v1.StageCount;
import dev.afterglow.proto.v1.Subscribe;
import java.io.BufferedInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.ConcurrentSkipListSet;

/**
 * The legitimate subscriber: every frame of one sensor, whole sensor, 8-bit, read as fast as the
 * node sends. Each frame is checked as it arrives: the sensor's id and geometry, 8-bit pixels of
 * the right length, a frame time on the sensor's frame grid {@code floor(k * 10^6 / rate)}, frame
 * times and sequence numbers strictly increasing, the frame window ending at the frame time, the
 * same chain stages in every provenance with no stage removing more than it got, and an age at
 * publishing at most the latency budget plus {@link #AGE_SLACK_US}. Frames are counted by grid index, so gaps show.
 */
final class LegitSubscriber implements AutoCloseable {
    /** Age at publishing above the sensor's latency budget that still passes: scheduling on a loaded machine. */
    static final long AGE_SLACK_US = 1_000_000;

    private final String sensorId;
    private final int width;
    private final int height;
    private final double rateHz;
    private final long maxAgeUs;
    private final Socket socket;
    private final Thread reader;
    private final ConcurrentSkipListSet<Long> indices = new ConcurrentSkipListSet<>();
    private final List<String> problems = new ArrayList<>();
    private long problemCount;
    private volatile boolean running = true;
    private volatile long newestFrameUs = -1;
    private volatile long frames;
    private long lastFrameUs = -1;
    private long lastSequence = -1;
    private List<String> stageNames;

    private LegitSubscriber(HostileNode node, String sensorId, int width, int height, double rateHz, double budgetMs)
            throws IOException {
        this.maxAgeUs = Math.round(budgetMs * 1000) + AGE_SLACK_US;
        this.sensorId = sensorId;
        this.width = width;
        this.height = height;
        this.rateHz = rateHz;
        InetAddress loopback = InetAddress.getLoopbackAddress();
        socket = new Socket();
        socket.setTcpNoDelay(true);
        socket.bind(new InetSocketAddress(loopback, 0));
        socket.connect(new InetSocketAddress(loopback, node.subscriberPort), 5_000);
        OutputStream out = socket.getOutputStream();
        out.write(Wire.delimited(Envelope.newBuilder().setSchemaVersion(Wire.SCHEMA).setSubscribe(Subscribe.newBuilder()
                .setSensorId(sensorId).setRateHz(0).setFormat(PixelFormat.PIXEL_FORMAT_GRAY8)).build()));
        out.flush();
        reader = new Thread(this::read, "legit-subscriber-" + sensorId);
        reader.setDaemon(true);
    }

    /** Subscribes to every frame of the sensor (which must be known to the node) and starts reading. */
    static LegitSubscriber start(HostileNode node, String sensorId, int width, int height, double rateHz, double budgetMs)
            throws IOException {
        LegitSubscriber s = new LegitSubscriber(node, sensorId, width, height, rateHz, budgetMs);
        s.reader.start();
        return s;
    }

    private void read() {
        try {
            InputStream in = new BufferedInputStream(socket.getInputStream(), 1 << 16);
            while (running) {
                Envelope e = Wire.read(in, 64 << 20);
                if (e.hasError()) {
                    problem("the node refused or ended the subscription: " + e.getError().getCode() + ": " + e.getError().getMessage());
                    return;
                }
                if (!e.hasIntensityFrame()) {
                    problem("unexpected " + e.getBodyCase() + " on the subscription");
                    continue;
                }
                check(e.getIntensityFrame());
            }
        } catch (IOException e) {
            if (running) {
                problem("the subscription ended: " + e);
            }
        }
    }

    private void check(IntensityFrame f) {
        long t = f.getFrameTimeUs();
        long k = Math.round(t * rateHz / 1e6);
        long onGrid = (long) Math.floor(k * 1e6 / rateHz + 1e-6);
        if (!f.getSensorId().equals(sensorId)) {
            problem("frame of sensor " + f.getSensorId());
        }
        if (f.getWidth() != width || f.getHeight() != height || f.getFormat() != PixelFormat.PIXEL_FORMAT_GRAY8
                || f.getPixels().size() != width * height) {
            problem("frame at " + t + " us: " + f.getWidth() + "x" + f.getHeight() + " " + f.getFormat() + " with "
                    + f.getPixels().size() + " pixel bytes, expected " + width + "x" + height + " gray8");
        }
        if (onGrid != t) {
            problem("frame time " + t + " us is not on the " + rateHz + " Hz grid");
        }
        if (t <= lastFrameUs || f.getSequence() <= lastSequence) {
            problem("frame " + f.getSequence() + " at " + t + " us after frame " + lastSequence + " at " + lastFrameUs + " us");
        }
        if (f.getWindowEndUs() != t || f.getWindowStartUs() > t) {
            problem("frame at " + t + " us has window [" + f.getWindowStartUs() + ", " + f.getWindowEndUs() + ")");
        }
        Provenance p = f.getProvenance();
        List<String> names = new ArrayList<>();
        for (StageCount s : p.getStagesList()) {
            names.add(s.getStage());
            if (s.getEventsIn() < 0 || s.getEventsRemoved() < 0 || s.getEventsRemoved() > s.getEventsIn()) {
                problem("frame at " + t + " us: stage " + s.getStage() + " in=" + s.getEventsIn() + " removed=" + s.getEventsRemoved());
            }
        }
        if (stageNames == null) {
            stageNames = names;
        } else if (!stageNames.equals(names)) {
            problem("frame at " + t + " us: stages " + names + ", earlier frames " + stageNames);
        }
        if (p.getEventsApplied() < 0 || p.getEventsDropped() < 0) {
            problem("frame at " + t + " us: applied=" + p.getEventsApplied() + " dropped=" + p.getEventsDropped());
        }
        if (p.getSensorToPublishUs() > maxAgeUs) {
            problem("frame at " + t + " us was " + p.getSensorToPublishUs() + " us old when published");
        }
        lastFrameUs = t;
        lastSequence = f.getSequence();
        indices.add(k);
        frames++;
        newestFrameUs = t;
    }

    private void problem(String what) {
        synchronized (problems) {
            problemCount++;
            if (problems.size() < 8) {
                problems.add(what);
            }
        }
    }

    /** What was wrong with the frames or the subscription so far. */
    List<String> problems() {
        synchronized (problems) {
            List<String> out = new ArrayList<>(problems);
            if (problemCount > problems.size()) {
                out.add("... " + (problemCount - problems.size()) + " more problems of these kinds");
            }
            return out;
        }
    }

    /** Frames received so far. */
    long frames() {
        return frames;
    }

    /** Frame time of the newest frame received, or -1. */
    long newestFrameUs() {
        return newestFrameUs;
    }

    /** Grid frames with time in [fromUs, toUs]. */
    long expected(long fromUs, long toUs) {
        long first = (long) Math.ceil(fromUs * rateHz / 1e6 - 1e-9);
        long last = (long) Math.floor(toUs * rateHz / 1e6 + 1e-9);
        return Math.max(0, last - first + 1);
    }

    /** Grid frames with time in [fromUs, toUs] that arrived. */
    long received(long fromUs, long toUs) {
        long first = (long) Math.ceil(fromUs * rateHz / 1e6 - 1e-9);
        long last = (long) Math.floor(toUs * rateHz / 1e6 + 1e-9);
        return last < first ? 0 : indices.subSet(first, true, last, true).size();
    }

    @Override
    public void close() throws IOException, InterruptedException {
        running = false;
        socket.close();
        reader.join(5_000);
    }
}
