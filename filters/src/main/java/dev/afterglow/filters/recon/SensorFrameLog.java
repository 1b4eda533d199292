package dev.afterglow.filters.recon;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;

/**
 * Converts a sensor's own intensity frame (8 to 16 bits per pixel) to natural-log intensity and
 * marks pixels that are saturated or dark, through a lookup table per bit depth (no per-pixel
 * {@code log}).
 *
 * <p>Log intensity of a pixel value v at full scale M = 2^bits - 1 is {@code ln((v + 1) / (M + 1))}:
 * the +1 keeps black finite. Threading: single owner thread.
 */
public final class SensorFrameLog {
    private final double saturatedFraction;
    private final double darkFraction;
    private int lutBits;
    private float[] lut;
    private int saturatedAt;
    private int darkAt;

    /**
     * @param saturatedFraction values at or above this fraction of full scale are saturated, (0, 1]
     * @param darkFraction values at or below this fraction of full scale are dark, [0, saturated)
     */
    public SensorFrameLog(double saturatedFraction, double darkFraction) {
        if (!(saturatedFraction > 0 && saturatedFraction <= 1)) {
            throw new IllegalArgumentException("complementary.saturated=" + saturatedFraction + " outside (0, 1]");
        }
        if (!(darkFraction >= 0 && darkFraction < saturatedFraction)) {
            throw new IllegalArgumentException("complementary.dark=" + darkFraction
                    + " outside [0, complementary.saturated=" + saturatedFraction + ")");
        }
        this.saturatedFraction = saturatedFraction;
        this.darkFraction = darkFraction;
    }

    /** Fraction of full scale at and above which a pixel is saturated. */
    public double saturatedFraction() {
        return saturatedFraction;
    }

    /** Fraction of full scale at and below which a pixel is dark. */
    public double darkFraction() {
        return darkFraction;
    }

    /**
     * Converts {@code count} pixels from {@code pixels} (position to limit, not modified).
     *
     * @param logOut receives log intensity
     * @param classOut receives 1 for saturated or dark pixels, else 0
     */
    public void convert(ByteBuffer pixels, int bitDepth, int count, float[] logOut, byte[] classOut) {
        if (bitDepth < 8 || bitDepth > 16) {
            throw new IllegalArgumentException("bit_depth=" + bitDepth + " outside [8, 16]");
        }
        int bytesPer = bitDepth == 8 ? 1 : 2;
        if (pixels.remaining() != count * bytesPer) {
            throw new IllegalArgumentException("frame has " + pixels.remaining() + " bytes, expected "
                    + (count * bytesPer) + " for " + count + " pixels at " + bitDepth + " bits");
        }
        ensureLut(bitDepth);
        ByteBuffer le = pixels.duplicate().order(ByteOrder.LITTLE_ENDIAN);
        int pos = le.position();
        int max = (1 << bitDepth) - 1;
        for (int i = 0; i < count; i++) {
            int v = bytesPer == 1 ? le.get(pos + i) & 0xFF : le.getShort(pos + 2 * i) & 0xFFFF;
            if (v > max) {
                v = max;
            }
            logOut[i] = lut[v];
            classOut[i] = (v >= saturatedAt || v <= darkAt) ? (byte) 1 : (byte) 0;
        }
    }

    /** Log intensity this converter assigns to value {@code v} at {@code bitDepth}. */
    public static double logOf(int v, int bitDepth) {
        int max = (1 << bitDepth) - 1;
        return Math.log((v + 1.0) / (max + 1.0));
    }

    private void ensureLut(int bitDepth) {
        if (lut != null && lutBits == bitDepth) {
            return;
        }
        int max = (1 << bitDepth) - 1;
        float[] table = new float[max + 1];
        for (int v = 0; v <= max; v++) {
            table[v] = (float) logOf(v, bitDepth);
        }
        lut = table;
        lutBits = bitDepth;
        saturatedAt = (int) Math.ceil(saturatedFraction * max);
        darkAt = (int) Math.floor(darkFraction * max);
    }
}
