package dev.afterglow.node.demo;

import java.util.SplittableRandom;

/**
 * A scene of our own for the demo: a conveyor belt with a fine texture carrying striped parcels
 * left to right across the middle of the view, between static machinery (top and bottom bands)
 * and a bright static lamp in the top-right corner that saturates the sensor's own frames.
 *
 * <p>Log intensity is precomputed per row over one period of the belt, so rendering a time step is
 * one linear interpolation per pixel. Deterministic for a given seed. Threading: one owner thread.
 */
public final class ConveyorScene {
    private final int width;
    private final int height;
    private final int beltTop;
    private final int beltBottom;
    private final int period;
    private final double speedPxPerS;
    private final float[] staticLog;
    private final float[] beltLog;

    /**
     * @param width sensor width, at least 16
     * @param height sensor height, at least 16
     * @param speedPxPerS belt speed in pixels per second
     * @param seed seed of the texture phases
     */
    public ConveyorScene(int width, int height, double speedPxPerS, long seed) {
        this.width = width;
        this.height = height;
        this.speedPxPerS = speedPxPerS;
        this.beltTop = height / 4;
        this.beltBottom = height - height / 4;
        this.period = Math.max(32, (int) (width * 0.6));
        SplittableRandom rnd = new SplittableRandom(seed);
        double phaseA = rnd.nextDouble() * 2 * Math.PI;
        double phaseB = rnd.nextDouble() * 2 * Math.PI;

        staticLog = new float[width * height];
        for (int y = 0; y < height; y++) {
            for (int x = 0; x < width; x++) {
                double albedo = 0.35 + 0.25 * Math.sin(2 * Math.PI * x / 61.0 + phaseA) * Math.sin(2 * Math.PI * y / 29.0 + phaseB);
                double dx = x - 0.85 * width;
                double dy = y - 0.11 * height;
                double r = 0.07 * width;
                if (dx * dx + dy * dy < r * r) {
                    albedo = 4.0; // the lamp: brighter than the frame's full scale
                }
                staticLog[y * width + x] = (float) Math.log(albedo);
            }
        }
        int beltRows = beltBottom - beltTop;
        beltLog = new float[beltRows * period];
        int parcelWidth = period / 2;
        for (int row = 0; row < beltRows; row++) {
            for (int u = 0; u < period; u++) {
                double albedo = 0.2 + 0.06 * Math.sin(2 * Math.PI * u / 13.0) * Math.sin(2 * Math.PI * row / 7.0);
                boolean parcel = u >= period / 6 && u < period / 6 + parcelWidth
                        && row >= beltRows / 6 && row < beltRows - beltRows / 6;
                if (parcel) {
                    albedo = ((u / 8) % 2 == 0) ? 0.75 : 0.55;
                }
                beltLog[row * period + u] = (float) Math.log(albedo);
            }
        }
    }

    /** Sensor width. */
    public int width() {
        return width;
    }

    /** Sensor height. */
    public int height() {
        return height;
    }

    /** Writes the true natural-log intensity of every pixel at {@code timeUs} into {@code out}. */
    public void logIntensity(long timeUs, double[] out) {
        double shift = speedPxPerS * timeUs * 1e-6;
        for (int y = 0; y < height; y++) {
            int rowStart = y * width;
            if (y < beltTop || y >= beltBottom) {
                for (int x = 0; x < width; x++) {
                    out[rowStart + x] = staticLog[rowStart + x];
                }
                continue;
            }
            int beltRow = (y - beltTop) * period;
            for (int x = 0; x < width; x++) {
                double u = x - shift;
                double wrapped = u - Math.floor(u / period) * period;
                int u0 = (int) wrapped;
                double f = wrapped - u0;
                int u1 = u0 + 1 == period ? 0 : u0 + 1;
                out[rowStart + x] = (1 - f) * beltLog[beltRow + u0] + f * beltLog[beltRow + u1];
            }
        }
    }

    /**
     * The sensor's own 8-bit frame of the scene at {@code timeUs}: intensity exp(L) scaled so that
     * albedo 1 is full scale, clipped (the lamp saturates) and quantised.
     */
    public void frame8(long timeUs, double[] scratchLog, byte[] out) {
        logIntensity(timeUs, scratchLog);
        for (int i = 0; i < width * height; i++) {
            double v = Math.exp(scratchLog[i]) * 255.0;
            out[i] = (byte) Math.min(255, Math.max(0, Math.round(v)));
        }
    }
}
