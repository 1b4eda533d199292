package dev.afterglow.node.pipeline;

/**
 * Maps a sensor's clock to the host's monotonic clock from packet arrivals: each packet gives an
 * offset {@code arrival - sensor time of its newest event}, which is the true offset plus the
 * packet's travel delay, so the smallest offsets come from the fastest packets.
 *
 * <p>Robust against single packets: offsets are kept as minima per bin of {@value #BIN_US} us of
 * host time over the last {@value #BINS} bins, and the estimate is the third smallest bin minimum
 * (the smallest of fewer bins while it starts). One packet, or a burst inside one or two bins,
 * cannot move it; a genuine change (drift, a faster path) moves every bin and is followed within
 * the window. While no packets arrive the last estimate stays. Single owner thread.
 */
final class ClockMapper {
    static final long BIN_US = 500_000;
    static final int BINS = 20;
    /** Bins that must agree before a lower offset is believed. */
    private static final int SUPPORT = 3;

    private final long[] binIndex = new long[BINS];
    private final long[] binMin = new long[BINS];
    private final long[] scratch = new long[BINS];
    private long offset = Long.MAX_VALUE;

    ClockMapper() {
        reset();
    }

    /** Records a packet that arrived at host {@code arrivalUs} whose newest event is at sensor {@code sensorUs}. */
    void observe(long arrivalUs, long sensorUs) {
        long v = arrivalUs - sensorUs;
        long b = Math.floorDiv(arrivalUs, BIN_US);
        int slot = (int) Math.floorMod(b, (long) BINS);
        if (binIndex[slot] != b) {
            binIndex[slot] = b;
            binMin[slot] = v;
        } else if (v < binMin[slot]) {
            binMin[slot] = v;
        } else {
            return; // nothing changed
        }
        offset = estimate(b);
    }

    /** The SUPPORT-th smallest bin minimum among the bins of the window ending at bin {@code now}. */
    private long estimate(long now) {
        int n = 0;
        for (int i = 0; i < BINS; i++) {
            if (binIndex[i] != Long.MIN_VALUE && binIndex[i] > now - BINS) {
                scratch[n++] = binMin[i];
            }
        }
        int k = Math.min(SUPPORT, n);
        // Partial selection: k passes over at most BINS values.
        for (int i = 0; i < k; i++) {
            int best = i;
            for (int j = i + 1; j < n; j++) {
                if (scratch[j] < scratch[best]) {
                    best = j;
                }
            }
            long tmp = scratch[i];
            scratch[i] = scratch[best];
            scratch[best] = tmp;
        }
        return scratch[k - 1];
    }

    /** True once a packet has been observed. */
    boolean ready() {
        return offset != Long.MAX_VALUE;
    }

    /** Host offset: host microseconds = sensor microseconds + offset. */
    long offsetUs() {
        return offset;
    }

    /** Host time (monotonic microseconds) of sensor time {@code sensorUs}. */
    long toHostUs(long sensorUs) {
        return sensorUs + offset;
    }

    /** Forgets everything (sensor clock restarted). */
    void reset() {
        java.util.Arrays.fill(binIndex, Long.MIN_VALUE);
        offset = Long.MAX_VALUE;
    }
}
