package dev.afterglow.filters.synth;

import java.nio.ByteBuffer;

/**
 * One of the sensor's own intensity frames: 8-bit pixels, row-major, with the exposure interval.
 * Owned and reused by the {@link SyntheticSensor}: the content is valid until the sensor has
 * produced a few more frames (see {@link SyntheticSensor#pollFrame()}); copy it to keep it.
 */
public final class SensorFrame {
    private final int width;
    private final int height;
    private final byte[] pixels;
    long index;
    long exposureStartUs;
    long exposureEndUs;

    SensorFrame(int width, int height) {
        this.width = width;
        this.height = height;
        this.pixels = new byte[width * height];
    }

    /** Pixels per row. */
    public int width() {
        return width;
    }

    /** Rows. */
    public int height() {
        return height;
    }

    /** The 8-bit values, row-major (unsigned: read with {@code & 0xFF}). */
    public byte[] pixels() {
        return pixels;
    }

    /** The pixels wrapped for {@code ComplementaryFilter.applyFrame(time, buffer, 8)}. */
    public ByteBuffer buffer() {
        return ByteBuffer.wrap(pixels);
    }

    /** Frame number, from 0. */
    public long index() {
        return index;
    }

    /** Start of the exposure, sensor time in microseconds. */
    public long exposureStartUs() {
        return exposureStartUs;
    }

    /** End of the exposure; the frame exists from this time on. */
    public long exposureEndUs() {
        return exposureEndUs;
    }

    /** Middle of the exposure: the time the frame best stands for. */
    public long midExposureUs() {
        return (exposureStartUs + exposureEndUs) / 2;
    }
}
