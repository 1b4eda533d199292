package dev.afterglow.filters.synth;

import dev.afterglow.filters.EventBatch;

/**
 * The ideal event generation model: a pixel fires when its log intensity has moved by the contrast
 * threshold C from the level of its last event, and that level moves by exactly ±C per event. So a
 * log ramp of size D at a pixel yields floor(|D|/C) events of the ramp's sign.
 *
 * <p>Between two calls to {@link #advance} each pixel's log intensity is taken to move linearly,
 * and each event is stamped with the (rounded) time its level is crossed; the events of one step
 * are returned in time order (a counting sort over the step's microseconds, buffers reused).
 * Thresholds may differ per pixel (mismatch). No noise: that belongs to the sensor that uses this
 * model. Threading: single owner thread.
 */
public final class EventGenerationModel {
    private final int width;
    private final int pixels;
    private final double[] thresholdOn;
    private final double[] thresholdOff;
    private final double[] reference;
    private final double[] level;
    private long timeUs;
    private boolean started;

    private int[] countByOffset = new int[0];
    private int[] stepPixel = new int[1024];
    private int[] stepTime = new int[1024];
    private byte[] stepPolarity = new byte[1024];
    private int[] sortedIndex = new int[1024];

    /** A model with one threshold C for both polarities at every pixel. */
    public EventGenerationModel(int width, int height, double contrast) {
        this(width, height, filled(width * height, contrast), filled(width * height, contrast));
    }

    /**
     * A model with per-pixel thresholds for ON and OFF events (arrays are copied).
     */
    public EventGenerationModel(int width, int height, double[] thresholdOn, double[] thresholdOff) {
        int n = width * height;
        if (thresholdOn.length != n || thresholdOff.length != n) {
            throw new IllegalArgumentException("threshold arrays must have width*height=" + n + " entries");
        }
        for (int i = 0; i < n; i++) {
            if (!(thresholdOn[i] > 0) || !(thresholdOff[i] > 0)) {
                throw new IllegalArgumentException("threshold at pixel " + i + " must be > 0");
            }
        }
        this.width = width;
        this.pixels = n;
        this.thresholdOn = thresholdOn.clone();
        this.thresholdOff = thresholdOff.clone();
        this.reference = new double[n];
        this.level = new double[n];
    }

    private static double[] filled(int n, double v) {
        double[] a = new double[n];
        java.util.Arrays.fill(a, v);
        return a;
    }

    /** Sets the time and every pixel's log intensity (and event reference level) without events. */
    public void start(long timeUs, double[] logIntensity) {
        System.arraycopy(logIntensity, 0, level, 0, pixels);
        System.arraycopy(logIntensity, 0, reference, 0, pixels);
        this.timeUs = timeUs;
        this.started = true;
    }

    /** Current model time. */
    public long timeUs() {
        return timeUs;
    }

    /** Log level of pixel {@code i}'s last event (or of the start). */
    public double reference(int i) {
        return reference[i];
    }

    /**
     * Moves every pixel linearly from its current log intensity to {@code next} over
     * ({@link #timeUs()}, {@code toUs}] and appends the events this causes to {@code out}, in time
     * order. {@code out}'s time base must be at or before the current time.
     *
     * @return the number of events appended
     * @throws IllegalStateException if {@code out} cannot hold them
     */
    public int advance(long toUs, double[] next, EventBatch out) {
        if (!started) {
            throw new IllegalStateException("start() first");
        }
        if (toUs < timeUs) {
            throw new IllegalArgumentException("time going backwards: " + toUs + "us < " + timeUs + "us");
        }
        long t0 = timeUs;
        long span = toUs - t0;
        int count = 0;
        for (int i = 0; i < pixels; i++) {
            double a = level[i];
            double b = next[i];
            double ref = reference[i];
            if (b > a) {
                double c = thresholdOn[i];
                while (b >= ref + c) {
                    ref += c;
                    count = record(count, i, t0, span, (ref - a) / (b - a), (byte) 1);
                }
            } else if (b < a) {
                double c = thresholdOff[i];
                while (b <= ref - c) {
                    ref -= c;
                    count = record(count, i, t0, span, (a - ref) / (a - b), (byte) -1);
                }
            }
            reference[i] = ref;
            level[i] = b;
        }
        timeUs = toUs;
        emitSorted(count, span, out);
        return count;
    }

    private int record(int count, int pixel, long t0, long span, double fraction, byte polarity) {
        if (count == stepPixel.length) {
            int size = count * 2;
            stepPixel = java.util.Arrays.copyOf(stepPixel, size);
            stepTime = java.util.Arrays.copyOf(stepTime, size);
            stepPolarity = java.util.Arrays.copyOf(stepPolarity, size);
            sortedIndex = new int[size];
        }
        long offset = Math.round(fraction * span);
        stepPixel[count] = pixel;
        stepTime[count] = (int) Math.max(0, Math.min(span, offset));
        stepPolarity[count] = polarity;
        return count + 1;
    }

    private void emitSorted(int count, long span, EventBatch out) {
        if (count == 0) {
            return;
        }
        if (out.size + count > out.capacity()) {
            throw new IllegalStateException("batch too small: " + (out.size + count) + " > " + out.capacity());
        }
        int slots = (int) span + 1;
        if (countByOffset.length < slots + 1) {
            countByOffset = new int[slots + 1];
        } else {
            java.util.Arrays.fill(countByOffset, 0, slots + 1, 0);
        }
        for (int k = 0; k < count; k++) {
            countByOffset[stepTime[k] + 1]++;
        }
        for (int s = 1; s <= slots; s++) {
            countByOffset[s] += countByOffset[s - 1];
        }
        for (int k = 0; k < count; k++) {
            sortedIndex[countByOffset[stepTime[k]]++] = k;
        }
        long t0 = timeUs - span;
        for (int j = 0; j < count; j++) {
            int k = sortedIndex[j];
            int p = stepPixel[k];
            out.add(p % width, p / width, t0 + stepTime[k], stepPolarity[k]);
        }
    }
}
