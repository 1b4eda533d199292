package dev.afterglow.filters.quality;

import java.util.Arrays;

/**
 * A denoiser's receiver operating characteristic: one point per parameter value, each the share of
 * background activity removed (x) and of signal kept (y), with the two end points every denoiser
 * family reaches trivially, "pass all" (removed 0, kept 1) and "drop all" (removed 1, kept 0).
 *
 * <p>The points are ordered by noise removed (ties by signal kept, descending) and joined by
 * straight lines; {@link #area()} is the trapezoid rule over x in [0, 1] through them, end points
 * included. No hull is taken: a point that lies below its neighbours lowers the area, as measured.
 * A perfect denoiser has area 1; one that removes noise and signal alike (kept = 1 - removed) has
 * 0.5. Immutable.
 */
public final class RocCurve {
    private final double[] removed;
    private final double[] kept;
    private final int[] source;

    /**
     * @param removed share of noise removed at each measured point, each in [0, 1]
     * @param kept share of signal kept at each measured point, each in [0, 1]
     * @throws IllegalArgumentException if the lengths differ or a share is outside [0, 1] or NaN
     */
    public RocCurve(double[] removed, double[] kept) {
        if (removed.length != kept.length) {
            throw new IllegalArgumentException("removed has " + removed.length + " points, kept " + kept.length);
        }
        int n = removed.length;
        Integer[] order = new Integer[n];
        for (int i = 0; i < n; i++) {
            share("removed", i, removed[i]);
            share("kept", i, kept[i]);
            order[i] = i;
        }
        Arrays.sort(order, (a, b) -> removed[a] != removed[b] ? Double.compare(removed[a], removed[b])
                : Double.compare(kept[b], kept[a]));
        this.removed = new double[n + 2];
        this.kept = new double[n + 2];
        this.source = new int[n + 2];
        this.removed[0] = 0;
        this.kept[0] = 1;
        this.source[0] = -1;
        for (int i = 0; i < n; i++) {
            this.removed[i + 1] = removed[order[i]];
            this.kept[i + 1] = kept[order[i]];
            this.source[i + 1] = order[i];
        }
        this.removed[n + 1] = 1;
        this.kept[n + 1] = 0;
        this.source[n + 1] = -1;
    }

    private static void share(String what, int i, double v) {
        if (!(v >= 0 && v <= 1)) {
            throw new IllegalArgumentException(what + "[" + i + "]=" + v + " outside [0, 1]");
        }
    }

    /** Area under the curve by the trapezoid rule over noise removed in [0, 1], end points included. */
    public double area() {
        double a = 0;
        for (int i = 1; i < removed.length; i++) {
            a += (removed[i] - removed[i - 1]) * (kept[i] + kept[i - 1]) * 0.5;
        }
        return a;
    }

    /** Points on the curve, end points included. */
    public int size() {
        return removed.length;
    }

    /** Noise removed at point {@code i} (0: pass all, {@code size() - 1}: drop all). */
    public double removed(int i) {
        return removed[i];
    }

    /** Signal kept at point {@code i}. */
    public double kept(int i) {
        return kept[i];
    }

    /** Index of point {@code i} among the measured points given, or -1 for an end point. */
    public int source(int i) {
        return source[i];
    }

    /**
     * The measured point that keeps the most signal among those removing at least {@code minRemoved}
     * of the noise (ties: the one removing more), as its index among the points given; -1 if none does.
     */
    public int bestAtRemoved(double minRemoved) {
        int best = -1;
        for (int i = 1; i < removed.length - 1; i++) {
            if (removed[i] >= minRemoved && (best < 0 || kept[i] > kept[best]
                    || (kept[i] == kept[best] && removed[i] > removed[best]))) {
                best = i;
            }
        }
        return best < 0 ? -1 : source[best];
    }
}
