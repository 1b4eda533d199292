package dev.afterglow.filters.recon;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.StageCounters;
import java.nio.ByteBuffer;

/**
 * The baseline every fusion must beat: shows the sensor's latest own frame, in log intensity, and
 * ignores events (they are counted, not used). Until the first frame it shows a flat image. Useful
 * in the node too, to forward a sensor's frames through the same subscribers, formats and
 * provenance as reconstructed ones.
 *
 * <p>Threading: single owner thread.
 */
public final class HoldFrame implements FrameFusion {
    private final int width;
    private final int height;
    private final SensorFrameLog frameLog = new SensorFrameLog(1, 0);
    private final float[] log;
    private final byte[] scratchClass;
    private final StageCounters counters = new StageCounters();

    public HoldFrame(int width, int height) {
        this.width = width;
        this.height = height;
        this.log = new float[width * height];
        this.scratchClass = new byte[width * height];
    }

    @Override
    public String name() {
        return "hold-frame";
    }

    @Override
    public void process(EventBatch batch) {
        counters.record(batch.size, batch.size);
    }

    @Override
    public void applyFrame(long timeUs, ByteBuffer pixels, int bitDepth) {
        frameLog.convert(pixels, bitDepth, width * height, log, scratchClass);
    }

    @Override
    public void readLog(long timeUs, float[] out) {
        System.arraycopy(log, 0, out, 0, log.length);
    }

    @Override
    public int width() {
        return width;
    }

    @Override
    public int height() {
        return height;
    }

    @Override
    public double contrast() {
        return 0;
    }

    @Override
    public StageCounters counters() {
        return counters;
    }

    @Override
    public String describe() {
        return "hold-frame";
    }
}
