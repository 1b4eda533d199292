package dev.afterglow.filters.recon;

/**
 * A shared exponential clock for state that decays as exp(-a·t), so events and readout need no
 * per-pixel {@code exp}.
 *
 * <p>A pixel keeps scaled state {@code s} with {@code value(T) = s · exp(-a·(T - origin))}. An
 * event at time t adds {@code q} to the value by adding {@code q · exp(a·(t - origin))} to
 * {@code s}: the growth factor comes from two small tables
 * ({@code exp(a·d) = coarse[d >>> 10] · fine[d & 1023]} for d in microseconds). Readout multiplies
 * every pixel by one factor per cut-off. Before the growth factor gets large the owner moves the
 * origin forward ({@link #scaleAt(int, long)}, {@link #moveOrigin(long)}) and scales
 * every pixel once: a pass over the state every {@link #spanUs()} at most.
 *
 * <p>Several cut-offs (classes) can share one origin, so per-pixel cut-offs chosen from a small
 * set cost one table lookup per event. Threading: single owner thread.
 */
final class DecayClock {
    private static final int FINE_BITS = 10;
    private static final int FINE = 1 << FINE_BITS;
    /** Largest a·d before renormalising: e^24 ≈ 2.6e10 keeps the scaled state far from overflow. */
    private static final double MAX_EXPONENT = 24.0;
    /** Largest span in microseconds, so the coarse table stays small for slow cut-offs. */
    private static final int MAX_SPAN_US = 1 << 22;

    private final double[] alphaPerUs;
    private final int spanUs;
    private final int coarseLen;
    private final float[] coarse;
    private final float[] fine;
    private long originUs;
    private boolean started;

    /**
     * @param alphaRadPerS cut-off of each class in rad/s, each 0 .. 1e4
     */
    DecayClock(double... alphaRadPerS) {
        alphaPerUs = new double[alphaRadPerS.length];
        double maxAlpha = 0;
        for (int c = 0; c < alphaRadPerS.length; c++) {
            alphaPerUs[c] = alphaRadPerS[c] * 1e-6;
            maxAlpha = Math.max(maxAlpha, alphaPerUs[c]);
        }
        long span = maxAlpha > 0 ? (long) (MAX_EXPONENT / maxAlpha) : MAX_SPAN_US;
        spanUs = (int) Math.max(FINE, Math.min(MAX_SPAN_US, span));
        coarseLen = (spanUs >>> FINE_BITS) + 1;
        coarse = new float[alphaPerUs.length * coarseLen];
        fine = new float[alphaPerUs.length * FINE];
        for (int c = 0; c < alphaPerUs.length; c++) {
            for (int k = 0; k < coarseLen; k++) {
                coarse[c * coarseLen + k] = (float) Math.exp(alphaPerUs[c] * ((long) k << FINE_BITS));
            }
            for (int k = 0; k < FINE; k++) {
                fine[c * FINE + k] = (float) Math.exp(alphaPerUs[c] * k);
            }
        }
    }

    /** Renormalisation interval: events must be less than this many microseconds after the origin. */
    int spanUs() {
        return spanUs;
    }

    /** Time the scaled state refers to. */
    long originUs() {
        return originUs;
    }

    /** True once an origin has been set. */
    boolean started() {
        return started;
    }

    /** Sets the origin without rescaling; only valid while all state is zero. */
    void start(long originUs) {
        this.originUs = originUs;
        this.started = true;
    }

    /** exp(a_c · d) for 0 <= d < spanUs. */
    float growth(int cls, int d) {
        return coarse[cls * coarseLen + (d >>> FINE_BITS)] * fine[(cls << FINE_BITS) + (d & (FINE - 1))];
    }

    /** exp(a · d) for class 0, 0 <= d < spanUs. */
    float growth0(int d) {
        return coarse[d >>> FINE_BITS] * fine[d & (FINE - 1)];
    }

    /**
     * Factor that turns scaled state of class {@code cls} into its value at {@code timeUs}; also
     * the factor to rescale the state by when the origin moves to {@code timeUs} (then call
     * {@link #moveOrigin}).
     */
    double scaleAt(int cls, long timeUs) {
        return Math.exp(-alphaPerUs[cls] * (timeUs - originUs));
    }

    /** Moves the origin; the owner has already rescaled its state. */
    void moveOrigin(long newOriginUs) {
        originUs = newOriginUs;
    }
}
