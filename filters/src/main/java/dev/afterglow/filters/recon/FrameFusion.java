package dev.afterglow.filters.recon;

import java.nio.ByteBuffer;

/**
 * A reconstruction that also takes the sensor's own intensity frames. Threading: the owner thread
 * of the reconstruction, in time order with its events.
 */
public interface FrameFusion extends Reconstruction {
    /**
     * Applies a sensor frame taken at {@code timeUs} (e.g. mid-exposure).
     *
     * @param pixels row-major, width*height values: one byte each for {@code bitDepth} 8, two
     *     little-endian bytes each for 9..16
     * @throws IllegalArgumentException if the size or bit depth is wrong
     */
    void applyFrame(long timeUs, ByteBuffer pixels, int bitDepth);

    /**
     * Applies a sensor frame exposed from {@code exposureStartUs} to {@code exposureEndUs}. A frame
     * is an average over its exposure; a fusion that models that overrides this, the others take
     * the frame at mid-exposure.
     *
     * @throws IllegalArgumentException if the size or bit depth is wrong
     */
    default void applyFrame(long exposureStartUs, long exposureEndUs, ByteBuffer pixels, int bitDepth) {
        applyFrame(exposureStartUs + (exposureEndUs - exposureStartUs) / 2, pixels, bitDepth);
    }
}
