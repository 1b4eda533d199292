package dev.afterglow.node.demo;

import dev.afterglow.filters.EventBatch;
import java.util.SplittableRandom;

/**
 * Sensor noise for the demo: background activity (independent Poisson events at a set rate per
 * pixel, random polarity) and a few hot pixels that fire at a high fixed rate with jitter.
 * Events of one step are produced in time order. Deterministic for a seed; one owner thread.
 */
public final class NoiseSource {
    private final int width;
    private final int height;
    private final double ratePerPixelHz;
    private final int[] hotPixels;
    private final double hotRateHz;
    private final SplittableRandom random;
    /** Events of one step as (offset from step start) << 32 | pixel, so sorting the longs sorts by time. */
    private long[] keys = new long[256];

    public NoiseSource(int width, int height, double ratePerPixelHz, int hotPixelCount, double hotRateHz, long seed) {
        this.width = width;
        this.height = height;
        this.ratePerPixelHz = ratePerPixelHz;
        this.hotRateHz = hotRateHz;
        this.random = new SplittableRandom(seed);
        this.hotPixels = new int[hotPixelCount];
        for (int i = 0; i < hotPixelCount; i++) {
            hotPixels[i] = random.nextInt(width * height);
        }
    }

    /** Appends the noise events in (fromUs, toUs] to {@code out} in time order. */
    public void step(long fromUs, long toUs, EventBatch out) {
        long span = toUs - fromUs;
        if (span <= 0) {
            return;
        }
        int count = 0;
        int background = poisson(ratePerPixelHz * width * height * span * 1e-6);
        for (int k = 0; k < background; k++) {
            count = append(count, random.nextInt(width * height), 1 + random.nextLong(span));
        }
        for (int h : hotPixels) {
            int fires = poisson(hotRateHz * span * 1e-6);
            for (int k = 0; k < fires; k++) {
                count = append(count, h, 1 + random.nextLong(span));
            }
        }
        java.util.Arrays.sort(keys, 0, count);
        for (int k = 0; k < count; k++) {
            int pixel = (int) keys[k];
            out.add(pixel % width, pixel / width, fromUs + (keys[k] >>> 32), random.nextBoolean() ? 1 : -1);
        }
    }

    private int append(int count, int pixel, long offsetUs) {
        if (count == keys.length) {
            keys = java.util.Arrays.copyOf(keys, count * 2);
        }
        keys[count] = (offsetUs << 32) | pixel;
        return count + 1;
    }

    /** Knuth's multiplication method for small means, normal approximation for large ones. */
    private int poisson(double mean) {
        if (mean <= 0) {
            return 0;
        }
        if (mean > 50) {
            return (int) Math.max(0, Math.round(mean + Math.sqrt(mean) * gaussian()));
        }
        double limit = Math.exp(-mean);
        double product = random.nextDouble();
        int k = 0;
        while (product > limit) {
            product *= random.nextDouble();
            k++;
        }
        return k;
    }

    private double gaussian() {
        double u = 1 - random.nextDouble();
        double v = random.nextDouble();
        return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
    }
}
