package dev.afterglow.filters.denoise;

import dev.afterglow.filters.EventBatch;
import java.util.Arrays;

/**
 * Per-pixel timestamps kept as {@code int} microseconds from a stage-local epoch, so a 640x480
 * map takes 1.2 MB instead of 2.4 MB and stays in cache.
 *
 * <p>Relative times are kept within [-2^29, 2^30) by moving the epoch forward when a batch would
 * leave that range ({@link #base(EventBatch)}): stored stamps are shifted, and stamps that fall
 * further back than {@link #NEVER} become {@code NEVER}. So hours of sensor time run without
 * overflow, and any difference {@code now - stamp} fits an {@code int}. A batch more than 2^29 us
 * (about 9 minutes) before the epoch is treated as a restart of the sensor clock: all stamps are
 * forgotten. Single-threaded, like the stage that owns it.
 */
final class PixelTimes {
    /** Stamp of a pixel that has not fired; older than any window a stage accepts (at most 1 s). */
    static final int NEVER = -(1 << 30) + 1;

    private static final long HIGH = 1L << 30;
    private static final long LOW = -(1L << 29);

    /** The stamps, indexed as the owning stage chooses (plain or padded). */
    final int[] stamps;
    private long epochUs;
    private boolean started;

    PixelTimes(int length) {
        stamps = new int[length];
        Arrays.fill(stamps, NEVER);
    }

    /**
     * Returns {@code batch.timeBaseUs} relative to the epoch, moving the epoch first if needed so
     * that every event of the batch has a relative time in [-2^29, 2^30).
     */
    int base(EventBatch batch) {
        if (!started) {
            epochUs = batch.timeBaseUs;
            started = true;
        }
        long base = batch.timeBaseUs - epochUs;
        if (base + batch.maxT >= HIGH || base < LOW) {
            rebase(batch.timeBaseUs);
            base = 0;
        }
        return (int) base;
    }

    private void rebase(long newEpochUs) {
        long shift = newEpochUs - epochUs;
        int[] s = stamps;
        if (shift < 0 || shift >= HIGH) {
            Arrays.fill(s, NEVER);
        } else {
            for (int i = 0; i < s.length; i++) {
                long v = s[i] - shift;
                s[i] = v < NEVER ? NEVER : (int) v;
            }
        }
        epochUs = newEpochUs;
    }

    /** Forgets every stamp. */
    void clear() {
        Arrays.fill(stamps, NEVER);
        started = false;
    }
}
