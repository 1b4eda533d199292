package dev.afterglow.filters.quality;

import dev.afterglow.filters.EventBatch;

/**
 * Counts, per sensor label ({@link dev.afterglow.filters.synth.EventLabel}), the events that went
 * into a filtering step and the events that came out. Filters keep event order, so the survivors
 * are a subsequence of the input and one merge pass matches them; nothing is allocated.
 */
final class SurvivorTally {
    private final long[] in = new long[3];
    private final long[] kept = new long[3];

    /** Adds one slice: {@code before} with its {@code labels}, and {@code after}, its surviving subsequence. */
    void add(EventBatch before, byte[] labels, EventBatch after) {
        int j = 0;
        int[] ax = after.x;
        int[] ay = after.y;
        int[] at = after.t;
        byte[] ap = after.p;
        long shift = after.timeBaseUs - before.timeBaseUs;
        for (int i = 0; i < before.size; i++) {
            byte l = labels[i];
            in[l]++;
            if (j < after.size && at[j] + shift == before.t[i] && ax[j] == before.x[i] && ay[j] == before.y[i]
                    && ap[j] == before.p[i]) {
                kept[l]++;
                j++;
            }
        }
    }

    /** Events of {@code label} that went in. */
    long in(byte label) {
        return in[label];
    }

    /** Events of {@code label} that came out. */
    long kept(byte label) {
        return kept[label];
    }
}
