package dev.afterglow.node.demo;

import dev.afterglow.filters.EventBatch;

/** Merges two time-ordered batches into one time-ordered batch (ties: {@code a} first). */
final class BatchMerge {
    private BatchMerge() {
    }

    static void merge(EventBatch a, EventBatch b, EventBatch out) {
        long base = Math.min(a.size > 0 ? a.timeBaseUs : Long.MAX_VALUE, b.size > 0 ? b.timeBaseUs : Long.MAX_VALUE);
        out.reset(base == Long.MAX_VALUE ? a.timeBaseUs : base);
        int i = 0;
        int j = 0;
        while (i < a.size || j < b.size) {
            boolean takeA = j >= b.size || (i < a.size && a.timeUs(i) <= b.timeUs(j));
            if (takeA) {
                out.add(a.x[i], a.y[i], a.timeUs(i), a.p[i]);
                i++;
            } else {
                out.add(b.x[j], b.y[j], b.timeUs(j), b.p[j]);
                j++;
            }
        }
    }
}
