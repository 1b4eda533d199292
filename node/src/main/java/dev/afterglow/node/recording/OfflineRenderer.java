package dev.afterglow.node.recording;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.filters.recon.FrameFusion;
import dev.afterglow.filters.recon.InferringReconstruction;
import dev.afterglow.node.pipeline.BatchSplit;
import dev.afterglow.node.pipeline.FrameGrid;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.SensorFrame;
import dev.afterglow.recording.RecordingReader;
import java.io.IOException;
import java.util.List;

/**
 * Runs a chain over a recording as fast as the CPU allows, with no network and no pacing, and
 * reads out frames on the node's frame grid ({@link FrameGrid}) by the live pipeline's rules: the
 * schedule starts after the first event, each packet's events before a frame time are applied
 * before that frame is read out, events older than the last frame are dropped, sensor frames go
 * to a fusion chain in recorded order, and the same tone map makes the 8-bit image. With no
 * shedding in the live node (it kept up), the frames are the ones the live node published for the
 * same input, chain and rate, bit for bit. The last frame is the last one at or before the last
 * event. Single-threaded.
 */
public final class OfflineRenderer {

    /** Where frames go. */
    public interface FrameOutput {
        /**
         * One frame: its grid index, sensor time, the log image and its 8-bit tone map (null without
         * a tone mapper; both reused for the next frame: copy what you keep), and the frame's provenance.
         */
        void frame(long index, long timeUs, float[] log, byte[] gray, FrameFacts facts) throws IOException;
    }

    /**
     * What a frame is made of: events applied since the previous frame, events dropped (outside the
     * sensor or late), readout and model inference times, and the model's identity (empty without one).
     */
    public record FrameFacts(long eventsApplied, long eventsDropped, long readoutNanos, long inferenceNanos, String model) {
    }

    /** Totals of a render, and any damage found in the recording. */
    public record Result(long frames, long events, long sensorFrames, long lastEventUs, List<String> problems) {
    }

    /** Events per packet at most (16 Mi, 128 MiB of records); a larger count is damage. */
    static final int MAX_PACKET_EVENTS = 1 << 24;

    private final Chain chain;
    private final int width;
    private final int height;
    private final double rateHz;
    private final ToneMapper toneMapper;
    private final EventPacketCodec codec;
    private final DecodeResult decoded = new DecodeResult();
    private final float[] log;
    private final byte[] gray;
    private EventBatch batch = new EventBatch(1 << 16);
    private EventBatch tail = new EventBatch(1 << 16);
    private boolean started;
    private long frameIndex;
    private long nextFrameUs;
    private long lastFrameUs = Long.MIN_VALUE;
    private long applied;
    private long dropped;
    private long frames;

    /**
     * @param chain built for {@code width} x {@code height}; the caller closes it
     * @param toneMapper makes the 8-bit images; null when no output needs them (they stay null)
     */
    public OfflineRenderer(Chain chain, int width, int height, double rateHz, ToneMapper toneMapper) {
        if (!(rateHz > 0) || rateHz > 10_000) {
            throw new IllegalArgumentException("--rate " + rateHz + " outside (0, 10000] Hz");
        }
        this.chain = chain;
        this.width = width;
        this.height = height;
        this.rateHz = rateHz;
        this.toneMapper = toneMapper;
        this.codec = new EventPacketCodec(width, height);
        this.log = new float[width * height];
        this.gray = toneMapper == null ? null : new byte[width * height];
    }

    /**
     * Renders every frame of the recording into {@code out}; {@code progress} gets each frame's
     * sensor time (for a progress bar).
     */
    public Result run(RecordingReader reader, FrameOutput out, java.util.function.LongConsumer progress) throws IOException {
        long events = 0;
        long sensorFrames = 0;
        long lastEventUs = -1;
        for (RecordingReader.Item item; (item = reader.next()) != null; ) {
            Envelope e = item.envelope();
            if (e.hasEvents()) {
                EventPacket p = e.getEvents();
                int count = p.getEventCount(); // from the file: checked against the bytes before anything is allocated
                if (count == 0) {
                    continue;
                }
                if (count < 0 || count > MAX_PACKET_EVENTS || 8L * count != p.getEvents().size()) {
                    dropped += Integer.toUnsignedLong(count); // rejected whole, as the node rejects such a packet
                    continue;
                }
                if (count > batch.capacity()) {
                    batch = new EventBatch(count);
                    tail = new EventBatch(count);
                }
                codec.decode(p.getEvents().asReadOnlyByteBuffer(), count, p.getTimeBaseUs(), batch, decoded);
                if (!decoded.ok()) {
                    dropped += count;
                    continue;
                }
                dropped += decoded.outsideSensor + decoded.offsetTooLarge;
                if (batch.size == 0) {
                    continue;
                }
                events += batch.size;
                lastEventUs = Math.max(lastEventUs, batch.timeBaseUs + batch.maxT);
                if (!started) {
                    started = true;
                    frameIndex = FrameGrid.firstIndexAfter(batch.minTimeUs(), rateHz);
                    nextFrameUs = FrameGrid.frameTime(frameIndex, rateHz);
                }
                dropLate();
                applyWithFrames(out, progress);
            } else if (e.hasSensorFrame()) {
                SensorFrame f = e.getSensorFrame();
                if (chain.reconstruction() instanceof FrameFusion fusion && f.getWidth() == width && f.getHeight() == height
                        && f.getExposureEndUs() >= f.getExposureStartUs()) {
                    try {
                        fusion.applyFrame(f.getExposureStartUs(), f.getExposureEndUs(), f.getPixels().asReadOnlyByteBuffer(),
                                f.getBitDepth());
                        sensorFrames++;
                    } catch (IllegalArgumentException ignored) {
                        // the live node rejects and counts it the same way
                    }
                }
            }
        }
        if (started) {
            emitUpTo(lastEventUs, out, progress);
        }
        return new Result(frames, events, sensorFrames, lastEventUs, reader.problems());
    }

    private void dropLate() {
        if (lastFrameUs != Long.MIN_VALUE) {
            dropped += BatchSplit.dropBefore(batch, lastFrameUs);
        }
    }

    private void applyWithFrames(FrameOutput out, java.util.function.LongConsumer progress) throws IOException {
        EventBatch current = batch;
        while (current.size > 0) {
            if (current.timeBaseUs + current.maxT < nextFrameUs) {
                apply(current);
                return;
            }
            int split = BatchSplit.firstAtOrAfter(current, nextFrameUs);
            if (split == current.size) {
                apply(current);
                return;
            }
            EventBatch rest = current == batch ? tail : batch;
            BatchSplit.splitInto(current, split, rest);
            apply(current);
            emitUpTo(rest.timeBaseUs + rest.t[0], out, progress);
            current = rest;
        }
    }

    private void apply(EventBatch b) {
        if (b.size > 0) {
            chain.process(b);
            applied += b.size;
        }
    }

    private void emitUpTo(long timeUs, FrameOutput out, java.util.function.LongConsumer progress) throws IOException {
        while (nextFrameUs <= timeUs) {
            long r0 = System.nanoTime();
            chain.reconstruction().readLog(nextFrameUs, log);
            if (toneMapper != null) {
                toneMapper.apply(log, log.length, gray);
            }
            long readout = System.nanoTime() - r0;
            InferringReconstruction model = chain.reconstruction() instanceof InferringReconstruction m ? m : null;
            out.frame(frameIndex, nextFrameUs, log, gray, new FrameFacts(applied, dropped, readout,
                    model == null ? 0 : model.lastInferenceNanos(), model == null ? "" : model.modelIdentity()));
            progress.accept(nextFrameUs);
            applied = 0;
            dropped = 0;
            frames++;
            lastFrameUs = nextFrameUs;
            frameIndex++;
            nextFrameUs = FrameGrid.frameTime(frameIndex, rateHz);
        }
    }
}
