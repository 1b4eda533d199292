package dev.afterglow.node.pipeline;

import dev.afterglow.filters.EventBatch;

/**
 * Splitting an event batch at a frame time, so the events before it are applied before the frame is
 * read out, and dropping the events older than the last frame: the live pipeline and the offline
 * renderer share these, so they treat events alike.
 */
public final class BatchSplit {
    private BatchSplit() {
    }

    /** Index of the first event at or after {@code timeUs}; the batch's size if none is. */
    public static int firstAtOrAfter(EventBatch b, long timeUs) {
        long limit = timeUs - b.timeBaseUs;
        for (int i = 0; i < b.size; i++) {
            if (b.t[i] >= limit) {
                return i;
            }
        }
        return b.size;
    }

    /** Moves events [split, size) of {@code from} into {@code to}; {@code from} keeps [0, split). */
    public static void splitInto(EventBatch from, int split, EventBatch to) {
        to.reset(from.timeBaseUs);
        int n = from.size - split;
        System.arraycopy(from.x, split, to.x, 0, n);
        System.arraycopy(from.y, split, to.y, 0, n);
        System.arraycopy(from.t, split, to.t, 0, n);
        System.arraycopy(from.p, split, to.p, 0, n);
        to.size = n;
        to.maxT = from.maxT;
        from.size = split;
    }

    /** Removes the events before {@code timeUs} (keeping the others in order); returns how many were removed. */
    public static int dropBefore(EventBatch b, long timeUs) {
        if (b.timeBaseUs >= timeUs) {
            return 0;
        }
        long limit = timeUs - b.timeBaseUs;
        int kept = 0;
        int n = b.size;
        for (int i = 0; i < n; i++) {
            if (b.t[i] >= limit) {
                if (kept != i) {
                    b.move(i, kept);
                }
                kept++;
            }
        }
        b.size = kept;
        return n - kept;
    }
}
