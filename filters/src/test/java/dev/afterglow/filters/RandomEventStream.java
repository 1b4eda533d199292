package dev.afterglow.filters;

import java.util.Arrays;
import java.util.SplittableRandom;

/**
 * Seeded random event streams for checking the fast stages against naive references. Test data
 * only: it is not a model of a sensor, it just mixes the kinds of activity the stages treat
 * differently.
 *
 * <p>The stream holds absolute {@code long} times. It mixes isolated background noise (Poisson per
 * pixel), a few very active (hot) pixels with a polarity bias, clustered activity (small bursts
 * around a point and edges sweeping across the sensor, so neighbours fire close in time), and gaps
 * of time with no events at all. Events are sorted by time, then optionally a small fraction is
 * moved back by a few microseconds ("mostly time-ordered"). The stream is cut into batches of 1 to
 * 5000 events (varying), whose time base is at or a little before their earliest event; empty
 * batches are inserted inside gaps.
 */
public final class RandomEventStream {
    /** Sensor width. */
    public final int width;
    /** Sensor height. */
    public final int height;
    /** Absolute time of each event in microseconds. */
    public final long[] t;
    /** Column of each event. */
    public final int[] x;
    /** Row of each event. */
    public final int[] y;
    /** Polarity of each event, +1 or -1. */
    public final byte[] p;
    /** Number of events. */
    public final int size;
    /** Batch {@code b} holds events {@code [batchStart[b], batchStart[b + 1])}. */
    private final int[] batchStart;
    private final long[] batchBase;
    /** Number of batches (some empty). */
    public final int batches;
    /** Largest batch. */
    public final int maxBatchSize;

    private RandomEventStream(Builder b, long[] t, int[] x, int[] y, byte[] p, int[] batchStart, long[] batchBase, int batches) {
        this.width = b.width;
        this.height = b.height;
        this.t = t;
        this.x = x;
        this.y = y;
        this.p = p;
        this.size = t.length;
        this.batchStart = batchStart;
        this.batchBase = batchBase;
        this.batches = batches;
        int max = 1;
        for (int i = 0; i < batches; i++) {
            max = Math.max(max, batchStart[i + 1] - batchStart[i]);
        }
        this.maxBatchSize = max;
    }

    /** Starts a stream description for a sensor of {@code width} x {@code height} pixels. */
    public static Builder builder(int width, int height, long seed) {
        return new Builder(width, height, seed);
    }

    /** Index of the first event of batch {@code b}. */
    public int batchFrom(int b) {
        return batchStart[b];
    }

    /** Index after the last event of batch {@code b}. */
    public int batchTo(int b) {
        return batchStart[b + 1];
    }

    /** Time base of batch {@code b}. */
    public long batchBase(int b) {
        return batchBase[b];
    }

    /** A batch large enough for every batch of this stream. */
    public EventBatch newBatch() {
        return new EventBatch(maxBatchSize);
    }

    /** Fills {@code out} with batch {@code b}. */
    public void fill(int b, EventBatch out) {
        out.reset(batchBase[b]);
        for (int i = batchStart[b]; i < batchStart[b + 1]; i++) {
            out.add(x[i], y[i], t[i], p[i]);
        }
    }

    /** Settings of a stream. Defaults give a few seconds of busy activity. */
    public static final class Builder {
        private final int width;
        private final int height;
        private final SplittableRandom rnd;
        private long startUs = 1_234_567_890L;
        private long activeUs = 3_000_000L;
        private double noiseHz = 2.0;
        private int hotPixels = 3;
        private double hotMinHz = 200;
        private double hotMaxHz = 2000;
        private double burstHz = 200;
        private double edgeHz = 3;
        private int gaps = 3;
        private long gapMinUs = 20_000;
        private long gapMaxUs = 2_000_000;
        private double disorderFraction = 0.0;
        private int disorderMaxUs = 0;
        private int maxBatch = 5000;
        private long maxBaseLagUs = 5_000;
        private long maxBatchSpanUs = 1L << 28;

        private Builder(int width, int height, long seed) {
            this.width = width;
            this.height = height;
            this.rnd = new SplittableRandom(seed);
        }

        /** Time of the start of the stream. */
        public Builder startUs(long v) {
            startUs = v;
            return this;
        }

        /** Length of active time, gaps excluded. */
        public Builder activeUs(long v) {
            activeUs = v;
            return this;
        }

        /** Background noise rate per pixel. */
        public Builder noiseHz(double v) {
            noiseHz = v;
            return this;
        }

        /** Number of hot pixels and the range of their rates. */
        public Builder hot(int count, double minHz, double maxHz) {
            hotPixels = count;
            hotMinHz = minHz;
            hotMaxHz = maxHz;
            return this;
        }

        /** Rate of small bursts (clusters around one point) over the whole sensor. */
        public Builder burstHz(double v) {
            burstHz = v;
            return this;
        }

        /** Rate of edges sweeping across the sensor. */
        public Builder edgeHz(double v) {
            edgeHz = v;
            return this;
        }

        /** Number of gaps with no events and the range of their lengths. */
        public Builder gaps(int count, long minUs, long maxUs) {
            gaps = count;
            gapMinUs = minUs;
            gapMaxUs = maxUs;
            return this;
        }

        /** Moves this fraction of events back in time by up to {@code maxUs} (0: strictly ordered). */
        public Builder disorder(double fraction, int maxUs) {
            disorderFraction = fraction;
            disorderMaxUs = maxUs;
            return this;
        }

        /** Largest batch (1..5000 by default) and how far a time base may precede its first event. */
        public Builder batches(int max, long maxBaseLagUs) {
            maxBatch = max;
            this.maxBaseLagUs = maxBaseLagUs;
            return this;
        }

        /** Generates the stream. */
        public RandomEventStream build() {
            Events ev = new Events();
            long end = activeUs;
            // Background noise: one Poisson process over the whole sensor, uniform pixel.
            int pixels = width * height;
            if (noiseHz > 0) {
                double rate = noiseHz * pixels * 1e-6;
                for (double time = exp(rate); time < end; time += exp(rate)) {
                    ev.add((long) time, rnd.nextInt(width), rnd.nextInt(height), rnd.nextBoolean() ? 1 : -1);
                }
            }
            // Hot pixels: fast Poisson processes with a per-pixel polarity bias.
            for (int h = 0; h < hotPixels; h++) {
                int hx = rnd.nextInt(width);
                int hy = rnd.nextInt(height);
                double rate = (hotMinHz + rnd.nextDouble() * (hotMaxHz - hotMinHz)) * 1e-6;
                double onBias = 0.5 + 0.4 * rnd.nextDouble();
                for (double time = exp(rate); time < end; time += exp(rate)) {
                    ev.add((long) time, hx, hy, rnd.nextDouble() < onBias ? 1 : -1);
                }
            }
            // Bursts: 3..40 events within radius 2 of a point over up to 3 ms, mostly one polarity.
            if (burstHz > 0) {
                double rate = burstHz * 1e-6;
                for (double time = exp(rate); time < end; time += exp(rate)) {
                    int cx = rnd.nextInt(width);
                    int cy = rnd.nextInt(height);
                    int pol = rnd.nextBoolean() ? 1 : -1;
                    int count = 3 + rnd.nextInt(38);
                    long spread = 1 + rnd.nextInt(3_000);
                    for (int k = 0; k < count; k++) {
                        int ex = clamp(cx + rnd.nextInt(5) - 2, width);
                        int ey = clamp(cy + rnd.nextInt(5) - 2, height);
                        long et = (long) time + rnd.nextLong(spread);
                        if (et < end) {
                            ev.add(et, ex, ey, rnd.nextDouble() < 0.85 ? pol : -pol);
                        }
                    }
                }
            }
            // Edges: a vertical or horizontal line sweeping over the sensor at 1..20 px/ms.
            if (edgeHz > 0) {
                double rate = edgeHz * 1e-6;
                for (double time = exp(rate); time < end; time += exp(rate)) {
                    boolean vertical = rnd.nextBoolean();
                    int along = vertical ? width : height;
                    int across = vertical ? height : width;
                    double usPerPixel = 50 + rnd.nextInt(1_000);
                    int pol = rnd.nextBoolean() ? 1 : -1;
                    int from = rnd.nextInt(across);
                    int to = Math.min(across, from + 1 + rnd.nextInt(across));
                    for (int a = 0; a < along; a++) {
                        for (int c = from; c < to; c++) {
                            int repeats = 1 + rnd.nextInt(2);
                            for (int r = 0; r < repeats; r++) {
                                long et = (long) (time + a * usPerPixel + rnd.nextDouble() * usPerPixel);
                                if (et < end) {
                                    ev.add(et, vertical ? a : c, vertical ? c : a, pol);
                                }
                            }
                        }
                    }
                }
            }
            ev.sortByTime();
            // Gaps: shift everything after a cut point forward, leaving a stretch with no events.
            long[] gapAt = new long[gaps];
            long[] gapLen = new long[gaps];
            for (int g = 0; g < gaps; g++) {
                gapAt[g] = rnd.nextLong(Math.max(1, end));
                gapLen[g] = gapMinUs + rnd.nextLong(Math.max(1, gapMaxUs - gapMinUs + 1));
            }
            for (int i = 0; i < ev.n; i++) {
                long shift = 0;
                for (int g = 0; g < gaps; g++) {
                    if (ev.t[i] >= gapAt[g]) {
                        shift += gapLen[g];
                    }
                }
                ev.t[i] += startUs + shift;
            }
            if (disorderFraction > 0 && disorderMaxUs > 0) {
                for (int i = 0; i < ev.n; i++) {
                    if (rnd.nextDouble() < disorderFraction) {
                        ev.t[i] -= 1 + rnd.nextInt(disorderMaxUs);
                    }
                }
            }
            return cut(ev);
        }

        private RandomEventStream cut(Events ev) {
            int n = ev.n;
            int[] starts = new int[16];
            long[] bases = new long[16];
            int count = 0;
            int i = 0;
            long lastTime = startUs;
            while (i < n) {
                // Empty batches inside a gap of more than 10 ms.
                if (ev.t[i] - lastTime > 10_000) {
                    int empties = 1 + rnd.nextInt(3);
                    for (int e = 0; e < empties; e++) {
                        if (count + 2 > starts.length) {
                            starts = Arrays.copyOf(starts, starts.length * 2);
                            bases = Arrays.copyOf(bases, bases.length * 2);
                        }
                        starts[count] = i;
                        bases[count] = lastTime + 1 + rnd.nextLong(ev.t[i] - lastTime - 1);
                        count++;
                    }
                }
                int want = batchSize();
                int j = i;
                long min = Long.MAX_VALUE;
                long max = Long.MIN_VALUE;
                while (j < n && j - i < want) {
                    long nextMin = Math.min(min, ev.t[j]);
                    long nextMax = Math.max(max, ev.t[j]);
                    // Keep a batch's span well below the 2^30 us offset limit, and end it at a gap.
                    if (j > i && (nextMax - nextMin > maxBatchSpanUs || ev.t[j] - ev.t[j - 1] > 10_000_000)) {
                        break;
                    }
                    min = nextMin;
                    max = nextMax;
                    j++;
                }
                if (count + 2 > starts.length) {
                    starts = Arrays.copyOf(starts, starts.length * 2);
                    bases = Arrays.copyOf(bases, bases.length * 2);
                }
                long lag = rnd.nextBoolean() ? 0 : rnd.nextLong(maxBaseLagUs + 1);
                starts[count] = i;
                bases[count] = min - lag;
                count++;
                lastTime = Math.max(lastTime, max);
                i = j;
            }
            starts[count] = n;
            return new RandomEventStream(this, Arrays.copyOf(ev.t, n), Arrays.copyOf(ev.x, n), Arrays.copyOf(ev.y, n),
                    Arrays.copyOf(ev.p, n), starts, bases, count);
        }

        private int batchSize() {
            double u = rnd.nextDouble();
            int size;
            if (u < 0.3) {
                size = 1 + rnd.nextInt(10);
            } else if (u < 0.7) {
                size = 1 + rnd.nextInt(500);
            } else {
                size = 1 + rnd.nextInt(5000);
            }
            return Math.min(size, maxBatch);
        }

        private double exp(double ratePerUs) {
            return -Math.log(1 - rnd.nextDouble()) / ratePerUs;
        }

        private static int clamp(int v, int n) {
            return v < 0 ? 0 : (v >= n ? n - 1 : v);
        }
    }

    /** Growable parallel arrays of events. */
    private static final class Events {
        long[] t = new long[1024];
        int[] x = new int[1024];
        int[] y = new int[1024];
        byte[] p = new byte[1024];
        int n;

        void add(long time, int ex, int ey, int pol) {
            if (n == t.length) {
                t = Arrays.copyOf(t, n * 2);
                x = Arrays.copyOf(x, n * 2);
                y = Arrays.copyOf(y, n * 2);
                p = Arrays.copyOf(p, n * 2);
            }
            t[n] = time;
            x[n] = ex;
            y[n] = ey;
            p[n] = (byte) pol;
            n++;
        }

        /** Stable sort by time through an index array. */
        void sortByTime() {
            Integer[] idx = new Integer[n];
            for (int i = 0; i < n; i++) {
                idx[i] = i;
            }
            long[] times = t;
            Arrays.sort(idx, (a, b) -> Long.compare(times[a], times[b]));
            long[] t2 = new long[Math.max(1, n)];
            int[] x2 = new int[t2.length];
            int[] y2 = new int[t2.length];
            byte[] p2 = new byte[t2.length];
            for (int i = 0; i < n; i++) {
                t2[i] = t[idx[i]];
                x2[i] = x[idx[i]];
                y2[i] = y[idx[i]];
                p2[i] = p[idx[i]];
            }
            t = t2;
            x = x2;
            y = y2;
            p = p2;
        }
    }
}
