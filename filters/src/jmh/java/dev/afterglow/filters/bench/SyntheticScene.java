package dev.afterglow.filters.bench;

import java.nio.ByteBuffer;
import java.util.Arrays;
import java.util.SplittableRandom;

/**
 * A seeded synthetic event stream for benchmarks: discs ("blobs") brighter or darker than the
 * background move along closed Lissajous paths, and uniform background noise is added on top. Invented
 * data, for speed measurements only.
 *
 * <p>Every blob path repeats after exactly {@link #periodUs()}, so the stream can be replayed
 * seamlessly with its time shifted by one period per replay. A pixel fires when a blob's edge
 * crosses it, like the ideal event generation model on a sharp edge: {@code m} events (1 to 3, the
 * blob's contrast over the threshold) of polarity +1 where the pixel gets brighter, -1 where it gets
 * darker, spread over the time the one-pixel edge takes to pass. So signal events are clustered in
 * space (along edges) and in time (neighbours fire within microseconds to milliseconds of each
 * other). Blobs are added until the signal reaches its share of the requested event count;
 * noise events are uniform over pixels, time and polarity.
 *
 * <p>Events are returned in time order, with times in [0, period) microseconds.
 */
public final class SyntheticScene {
    /** Simulation step for edge crossings; blobs move well under one pixel per step. */
    private static final int STEP_US = 50;

    private final int width;
    private final int height;
    private final long periodUs;
    private final int size;
    private final int signalEvents;
    private final int blobs;
    private final int[] x;
    private final int[] y;
    private final int[] t;
    private final byte[] p;

    private SyntheticScene(int width, int height, long periodUs, int signalEvents, int blobs, Events all) {
        this.width = width;
        this.height = height;
        this.periodUs = periodUs;
        this.size = all.size;
        this.signalEvents = signalEvents;
        this.blobs = blobs;
        // Sort by time; the index in the low bits keeps the sort stable.
        long[] keys = new long[size];
        for (int i = 0; i < size; i++) {
            keys[i] = ((long) all.t[i] << 32) | i;
        }
        Arrays.sort(keys);
        x = new int[size];
        y = new int[size];
        t = new int[size];
        p = new byte[size];
        for (int j = 0; j < size; j++) {
            int i = (int) keys[j];
            x[j] = all.x[i];
            y[j] = all.y[i];
            t[j] = all.t[i];
            p[j] = all.p[i];
        }
    }

    /**
     * Generates a scene.
     *
     * @param width sensor width
     * @param height sensor height
     * @param targetEvents about this many events per period (the last blob added may overshoot by a
     *     few percent)
     * @param eventsPerSecond mean event rate; sets the period to targetEvents / rate, rounded to
     *     whole milliseconds
     * @param noiseFraction share of noise events, in [0, 1)
     * @param seed random seed
     */
    public static SyntheticScene generate(int width, int height, int targetEvents, double eventsPerSecond,
            double noiseFraction, long seed) {
        if (!(noiseFraction >= 0 && noiseFraction < 1)) {
            throw new IllegalArgumentException("noiseFraction=" + noiseFraction + " outside [0, 1)");
        }
        long periodUs = Math.max(1, Math.round(targetEvents / eventsPerSecond * 1e3)) * 1000;
        SplittableRandom random = new SplittableRandom(seed);
        Events events = new Events(targetEvents + targetEvents / 4);
        int signalTarget = (int) (targetEvents * (1 - noiseFraction));
        int blobs = 0;
        while (events.size < signalTarget && blobs < 10_000) {
            Blob blob = Blob.random(width, height, periodUs, random);
            blob.emit(width, height, periodUs, events);
            blobs++;
        }
        int signal = events.size;
        long noise = Math.round(signal * noiseFraction / (1 - noiseFraction));
        for (long k = 0; k < noise; k++) {
            events.add(random.nextInt(width), random.nextInt(height), (int) random.nextLong(periodUs),
                    random.nextBoolean() ? 1 : -1);
        }
        return new SyntheticScene(width, height, periodUs, signal, blobs, events);
    }

    /**
     * An 8-bit frame as the sensor's own camera would give it: a horizontal ramp from black to white,
     * so about 5% of pixels are at or below 5% of full scale and 5% at or above 95%.
     */
    public static ByteBuffer rampFrame(int width, int height) {
        byte[] pixels = new byte[width * height];
        for (int row = 0; row < height; row++) {
            for (int col = 0; col < width; col++) {
                pixels[row * width + col] = (byte) Math.round(255.0 * col / Math.max(1, width - 1));
            }
        }
        return ByteBuffer.wrap(pixels);
    }

    /** Sensor width. */
    public int width() {
        return width;
    }

    /** Sensor height. */
    public int height() {
        return height;
    }

    /** Length of one period of the scene in microseconds (a whole number of milliseconds). */
    public long periodUs() {
        return periodUs;
    }

    /** Number of events in one period. */
    public int size() {
        return size;
    }

    /** Events from blob edges (the rest is noise). */
    public int signalEvents() {
        return signalEvents;
    }

    /** Number of blobs. */
    public int blobs() {
        return blobs;
    }

    /** Column of event {@code i}. */
    public int x(int i) {
        return x[i];
    }

    /** Row of event {@code i}. */
    public int y(int i) {
        return y[i];
    }

    /** Time of event {@code i} in microseconds from the start of the period. */
    public int t(int i) {
        return t[i];
    }

    /** Polarity of event {@code i}, +1 or -1. */
    public int p(int i) {
        return p[i];
    }

    /** A disc moving on a closed Lissajous path that repeats every period. */
    private static final class Blob {
        final double radius;
        final double cx;
        final double cy;
        final double rx;
        final double ry;
        final int kx;
        final int ky;
        final double phaseX;
        final double phaseY;
        final int sign;
        final int eventsPerCrossing;

        private Blob(double radius, double cx, double cy, double rx, double ry, int kx, int ky,
                double phaseX, double phaseY, int sign, int eventsPerCrossing) {
            this.radius = radius;
            this.cx = cx;
            this.cy = cy;
            this.rx = rx;
            this.ry = ry;
            this.kx = kx;
            this.ky = ky;
            this.phaseX = phaseX;
            this.phaseY = phaseY;
            this.sign = sign;
            this.eventsPerCrossing = eventsPerCrossing;
        }

        static Blob random(int width, int height, long periodUs, SplittableRandom r) {
            double scale = Math.min(width, height);
            double radius = scale * (0.03 + 0.05 * r.nextDouble());
            double rx = scale * (0.05 + 0.25 * r.nextDouble());
            double ry = scale * (0.05 + 0.25 * r.nextDouble());
            // Small paths may run twice per period; speeds stay in the hundreds to a few thousand px/s.
            int kx = rx < 0.15 * scale ? 1 + r.nextInt(2) : 1;
            int ky = ry < 0.15 * scale ? 1 + r.nextInt(2) : 1;
            return new Blob(radius, width * r.nextDouble(), height * r.nextDouble(), rx, ry, kx, ky,
                    2 * Math.PI * r.nextDouble(), 2 * Math.PI * r.nextDouble(),
                    r.nextBoolean() ? 1 : -1, 1 + r.nextInt(3));
        }

        double centreX(long tUs, long periodUs) {
            return cx + rx * Math.cos(2 * Math.PI * kx * tUs / periodUs + phaseX);
        }

        double centreY(long tUs, long periodUs) {
            return cy + ry * Math.sin(2 * Math.PI * ky * tUs / periodUs + phaseY);
        }

        /**
         * Appends the events of one period. In each step a pixel row inside the disc is an interval
         * of columns at the step's start and another at its end; the pixels in one but not the other
         * are crossed by the edge during the step.
         */
        void emit(int width, int height, long periodUs, Events out) {
            double r2 = radius * radius;
            for (long t0 = 0; t0 < periodUs; t0 += STEP_US) {
                long t1 = t0 + STEP_US;
                double x0 = centreX(t0, periodUs);
                double y0 = centreY(t0, periodUs);
                double x1 = centreX(t1, periodUs);
                double y1 = centreY(t1, periodUs);
                double speedPxPerUs = Math.hypot(x1 - x0, y1 - y0) / STEP_US;
                // The one-pixel edge passes in 1/speed; the pixel's m events share that time.
                double spacingUs = Math.min(2000, 1 / Math.max(speedPxPerUs, 1e-6)) / eventsPerCrossing;
                int rowLo = Math.max(0, (int) Math.floor(Math.min(y0, y1) - radius - 1));
                int rowHi = Math.min(height - 1, (int) Math.ceil(Math.max(y0, y1) + radius + 1));
                for (int row = rowLo; row <= rowHi; row++) {
                    double dy0 = row - y0;
                    double dy1 = row - y1;
                    double h0 = dy0 * dy0 <= r2 ? Math.sqrt(r2 - dy0 * dy0) : -1;
                    double h1 = dy1 * dy1 <= r2 ? Math.sqrt(r2 - dy1 * dy1) : -1;
                    // Inside columns [lo, hi]; empty when lo > hi.
                    int lo0 = h0 < 0 ? 1 : (int) Math.ceil(x0 - h0);
                    int hi0 = h0 < 0 ? 0 : (int) Math.floor(x0 + h0);
                    int lo1 = h1 < 0 ? 1 : (int) Math.ceil(x1 - h1);
                    int hi1 = h1 < 0 ? 0 : (int) Math.floor(x1 + h1);
                    boolean overlap = lo0 <= hi0 && lo1 <= hi1 && lo0 <= hi1 && lo1 <= hi0;
                    if (overlap) {
                        // Left and right ends of the two intervals differ.
                        crossings(Math.min(lo0, lo1), Math.max(lo0, lo1) - 1, row, t0, x0, y0, x1, y1, spacingUs,
                                periodUs, width, out);
                        crossings(Math.min(hi0, hi1) + 1, Math.max(hi0, hi1), row, t0, x0, y0, x1, y1, spacingUs,
                                periodUs, width, out);
                    } else {
                        crossings(lo0, hi0, row, t0, x0, y0, x1, y1, spacingUs, periodUs, width, out);
                        crossings(lo1, hi1, row, t0, x0, y0, x1, y1, spacingUs, periodUs, width, out);
                    }
                }
            }
        }

        /** Emits the events of pixels {@code [colLo, colHi]} of {@code row}, each inside the disc at one end of the step only. */
        private void crossings(int colLo, int colHi, int row, long t0, double x0, double y0, double x1, double y1,
                double spacingUs, long periodUs, int width, Events out) {
            int from = Math.max(0, colLo);
            int to = Math.min(width - 1, colHi);
            for (int col = from; col <= to; col++) {
                double ax = col - x0;
                double ay = row - y0;
                double bx = col - x1;
                double by = row - y1;
                double d0 = Math.sqrt(ax * ax + ay * ay) - radius;
                double d1 = Math.sqrt(bx * bx + by * by) - radius;
                double f = d0 == d1 ? 0.5 : Math.max(0, Math.min(1, d0 / (d0 - d1)));
                double crossUs = t0 + f * STEP_US;
                int polarity = d1 < d0 ? sign : -sign; // moving inwards: the pixel takes the blob's brightness
                for (int j = 0; j < eventsPerCrossing; j++) {
                    long at = Math.round(crossUs + j * spacingUs) % periodUs;
                    out.add(col, row, (int) at, polarity);
                }
            }
        }
    }

    /** Growable parallel arrays used while generating. */
    private static final class Events {
        int[] x;
        int[] y;
        int[] t;
        byte[] p;
        int size;

        Events(int capacity) {
            x = new int[capacity];
            y = new int[capacity];
            t = new int[capacity];
            p = new byte[capacity];
        }

        void add(int col, int row, int timeUs, int polarity) {
            if (size == x.length) {
                int grown = x.length + (x.length >> 1) + 16;
                x = Arrays.copyOf(x, grown);
                y = Arrays.copyOf(y, grown);
                t = Arrays.copyOf(t, grown);
                p = Arrays.copyOf(p, grown);
            }
            x[size] = col;
            y[size] = row;
            t[size] = timeUs;
            p[size] = polarity > 0 ? (byte) 1 : (byte) -1;
            size++;
        }
    }
}
