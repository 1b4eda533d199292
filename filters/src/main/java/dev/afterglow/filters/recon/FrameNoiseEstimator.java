package dev.afterglow.filters.recon;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;

/**
 * Learns a sensor's frame noise (read noise r and shot gain g of {@link FrameNoiseModel}) online
 * from its own frames, by the photon-transfer method of the EMVA 1288 standard (quoted from
 * memory): the temporal variance of a pixel is half the mean square difference of two frames of an
 * unchanged scene, {@code σ² = ½·E[(y_A - y_B)²]}, and it grows linearly with the signal,
 * {@code σ² = r² + 1/12 + g·μ} (read and quantisation noise plus shot noise).
 *
 * <p>Two consecutive frames are compared at the pixels the events say did not change in between
 * (no event reached the pixel), neither clipped at 0 nor saturated; each difference goes into one
 * of {@value #BINS} bins by the pair's mean level (8-bit counts). A difference too large to be
 * noise (beyond {@value #OUTLIER_SIGMAS} standard deviations under the current estimate or its
 * bin's own, at least {@value #OUTLIER_FLOOR} counts) is left out: it is a change the events missed. Bins forget
 * with a factor {@value #DECAY} per frame, so the estimate follows a sensor whose gain or
 * temperature changes within tens of frames. A straight line through the bins (weighted by their
 * sample counts) gives {@code r² + 1/12} and {@code g}; with a negative slope the shot gain is
 * taken as 0 and r from the weighted mean. Until {@value #MIN_SAMPLES} samples have been seen the
 * configured values stand.
 *
 * <p>Cost per frame: one pass over the pixels with a subtraction and, for static pixels, three
 * additions; the previous frame is kept as 2 bytes per pixel. Single owner thread.
 */
final class FrameNoiseEstimator {
    static final int BINS = 32;
    static final double DECAY = 0.9;
    static final double OUTLIER_SIGMAS = 5;
    static final double OUTLIER_FLOOR = 24;
    static final double MIN_SAMPLES = 2_000;

    private final short[] previous;
    private int previousBits;
    private boolean hasPrevious;
    private final double[] count = new double[BINS];
    private final double[] sumSquares = new double[BINS];
    private final double[] sumLevel = new double[BINS];
    private double readNoise8;
    private double shotGain8;

    FrameNoiseEstimator(int pixels, double readNoise8, double shotGain8) {
        this.previous = new short[pixels];
        this.readNoise8 = readNoise8;
        this.shotGain8 = shotGain8;
    }

    /**
     * Compares a frame with the previous one at the pixels whose {@code changed} flag is 0, then
     * keeps it as the previous frame.
     *
     * @param saturatedAt8 8-bit level at and above which a pixel is saturated
     */
    void observe(ByteBuffer pixels, int bitDepth, byte[] changed, double saturatedAt8) {
        int n = previous.length;
        int bytesPer = bitDepth == 8 ? 1 : 2;
        int max = (1 << bitDepth) - 1;
        double toCounts8 = 255.0 / max;
        ByteBuffer in = pixels.duplicate().order(ByteOrder.LITTLE_ENDIAN);
        int at = in.position();
        boolean compare = hasPrevious && previousBits == bitDepth;
        for (int b = 0; b < BINS; b++) {
            count[b] *= DECAY;
            sumSquares[b] *= DECAY;
            sumLevel[b] *= DECAY;
        }
        double binWidth = 256.0 / BINS;
        for (int i = 0; i < n; i++) {
            int v = bytesPer == 1 ? in.get(at + i) & 0xFF : Math.min(max, in.getShort(at + 2 * i) & 0xFFFF);
            if (compare && changed[i] == 0) {
                int u = previous[i] & 0xFFFF;
                double a = v * toCounts8;
                double c = u * toCounts8;
                if (v > 0 && u > 0 && a < saturatedAt8 && c < saturatedAt8) {
                    double level = 0.5 * (a + c);
                    double d = a - c;
                    int bin = Math.min(BINS - 1, (int) (level / binWidth));
                    double seen = count[bin] > 10 ? sumSquares[bin] / count[bin] : 0;
                    // |d| within max(floor, k·sqrt(2σ²)), compared squared (no square root per pixel).
                    double limit2 = Math.max(OUTLIER_FLOOR * OUTLIER_FLOOR,
                            OUTLIER_SIGMAS * OUTLIER_SIGMAS * 2 * Math.max(variance8(level), seen));
                    if (d * d <= limit2) {
                        count[bin]++;
                        sumSquares[bin] += 0.5 * d * d;
                        sumLevel[bin] += level;
                    }
                }
            }
            previous[i] = (short) v;
        }
        previousBits = bitDepth;
        hasPrevious = true;
    }

    /** Variance in 8-bit counts² at {@code level} under the current estimate. */
    double variance8(double level) {
        return readNoise8 * readNoise8 + 1.0 / 12 + shotGain8 * level;
    }

    /**
     * Fits the line through the bins; returns true when the estimate moved by more than 2% (the
     * caller then rebuilds its tables).
     */
    boolean refit() {
        double w = 0;
        double sx = 0;
        double sy = 0;
        for (int b = 0; b < BINS; b++) {
            if (count[b] < 1) {
                continue;
            }
            w += count[b];
            sx += sumLevel[b];
            sy += sumSquares[b];
        }
        if (w < MIN_SAMPLES) {
            return false;
        }
        double mx = sx / w;
        double my = sy / w;
        double sxx = 0;
        double sxy = 0;
        for (int b = 0; b < BINS; b++) {
            if (count[b] < 1) {
                continue;
            }
            double x = sumLevel[b] / count[b] - mx;
            double y = sumSquares[b] / count[b] - my;
            sxx += count[b] * x * x;
            sxy += count[b] * x * y;
        }
        double gain = sxx > 0 ? Math.max(0, sxy / sxx) : 0;
        double intercept = gain > 0 ? my - gain * mx : my;
        double read = Math.sqrt(Math.max(0, intercept - 1.0 / 12));
        boolean moved = Math.abs(read - readNoise8) > 0.02 * Math.max(readNoise8, 0.1)
                || Math.abs(gain - shotGain8) > 0.02 * Math.max(shotGain8, 0.01);
        readNoise8 = read;
        shotGain8 = gain;
        return moved;
    }

    /** Read noise in 8-bit counts (the configured value until enough samples came). */
    double readNoise8() {
        return readNoise8;
    }

    /** Shot gain in 8-bit counts per count of signal (the configured value until enough samples came). */
    double shotGain8() {
        return shotGain8;
    }
}
