package dev.afterglow.node.cli;

import dev.afterglow.filters.readout.ToneMap;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.demo.GrayPngWriter;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Provenance;
import dev.afterglow.proto.v1.StageCount;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;

/** Reads frames from a subscription, prints one line of numbers per frame and saves some as PNG. */
final class FrameWatcher {
    private final SubscriberClient client;
    private final PrintStream out;
    private final Path saveDir;
    private final int saveEvery;

    FrameWatcher(SubscriberClient client, PrintStream out, Path saveDir, int saveEvery) {
        this.client = client;
        this.out = out;
        this.saveDir = saveDir;
        this.saveEvery = saveEvery;
    }

    /** Reads {@code count} frames (0: until the connection ends); returns frames read. */
    long run(long count) throws IOException {
        return run(count, () -> false);
    }

    /**
     * Reads {@code count} frames (0: no limit) until the connection ends, or until a read times
     * out while {@code done} says the source has finished; returns frames read.
     */
    long run(long count, java.util.function.BooleanSupplier done) throws IOException {
        if (saveDir != null) {
            Files.createDirectories(saveDir);
        }
        long n = 0;
        while (count == 0 || n < count) {
            IntensityFrame f;
            try {
                f = client.next();
            } catch (java.io.EOFException e) {
                break;
            } catch (java.net.SocketTimeoutException e) {
                if (done.getAsBoolean()) {
                    break;
                }
                continue;
            }
            n++;
            out.println(line(f));
            if (saveDir != null && saveEvery > 0 && n % saveEvery == 0) {
                GrayPngWriter.write(saveDir.resolve(String.format(Locale.ROOT, "%s-%06d.png", f.getSensorId(), f.getSequence())),
                        f.getWidth(), f.getHeight(), gray(f));
            }
        }
        return n;
    }

    static String line(IntensityFrame f) {
        Provenance p = f.getProvenance();
        StringBuilder b = new StringBuilder(String.format(Locale.ROOT,
                "%s #%d t=%.3fs %dx%d applied=%d dropped=%d", f.getSensorId(), f.getSequence(), f.getFrameTimeUs() * 1e-6,
                f.getWidth(), f.getHeight(), p.getEventsApplied(), p.getEventsDropped()));
        for (StageCount s : p.getStagesList()) {
            if (s.getEventsRemoved() > 0) {
                b.append(' ').append(s.getStage()).append("-=").append(s.getEventsRemoved());
            }
        }
        b.append(String.format(Locale.ROOT, " age=%.2fms readout=%.2fms", p.getSensorToPublishUs() / 1000.0, p.getReadoutNs() / 1e6));
        return b.toString();
    }

    /** 8-bit pixels of a frame (log frames are tone-mapped here). */
    static byte[] gray(IntensityFrame f) {
        byte[] bytes = f.getPixels().toByteArray();
        if (f.getFormat() != PixelFormat.PIXEL_FORMAT_LOG_F32) {
            return bytes;
        }
        int n = f.getWidth() * f.getHeight();
        float[] log = new float[n];
        ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN).asFloatBuffer().get(log);
        byte[] gray = new byte[n];
        new ToneMapper(ToneMap.DEFAULT).apply(log, n, gray);
        return gray;
    }
}
