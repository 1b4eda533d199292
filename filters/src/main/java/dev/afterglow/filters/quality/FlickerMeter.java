package dev.afterglow.filters.quality;

/**
 * Temporal flicker of reconstructions: the mean absolute change, from one evaluation to the next,
 * of each method's fitted log image ({@code a·recon + b} with the frame's own affine fit) over the
 * pixels whose true log intensity changed by less than {@value #STATIC_LOG} between the two
 * evaluations (the static regions). A perfect reconstruction scores 0 there; noise that comes and
 * goes, drift and a global level that pumps from frame to frame all raise it. In natural-log units.
 *
 * <p>Reusable buffers for one image size and a fixed number of methods. Threading: one owner thread.
 */
public final class FlickerMeter {
    /** Largest true change (natural-log units) for a pixel to count as static. */
    public static final double STATIC_LOG = 1e-3;

    private final int pixels;
    private final float[] previousTruth;
    private final float[] currentTruth;
    private final float[][] previousFitted;
    private final boolean[] havePrevious;
    private boolean haveTruth;
    private boolean havePreviousTruth;

    /** Buffers for {@code methods} methods on images of {@code pixels} pixels. */
    public FlickerMeter(int pixels, int methods) {
        this.pixels = pixels;
        this.previousTruth = new float[pixels];
        this.currentTruth = new float[pixels];
        this.previousFitted = new float[methods][pixels];
        this.havePrevious = new boolean[methods];
    }

    /** Starts an evaluation with its true log image; call {@link #measure} for each method after. */
    public void truth(float[] truthLog) {
        if (haveTruth) {
            System.arraycopy(currentTruth, 0, previousTruth, 0, pixels);
            havePreviousTruth = true;
        }
        System.arraycopy(truthLog, 0, currentTruth, 0, pixels);
        haveTruth = true;
    }

    /**
     * Marks in {@code out} (1, else 0) the pixels whose true log intensity changed by more than
     * {@code threshold} since the previous evaluation: where the scene moved. All 0 at the first
     * evaluation.
     */
    public void moving(double threshold, byte[] out) {
        for (int i = 0; i < pixels; i++) {
            out[i] = (byte) (havePreviousTruth && Math.abs(currentTruth[i] - previousTruth[i]) > threshold ? 1 : 0);
        }
    }

    /**
     * Records method {@code k}'s log image of this evaluation with its fit and returns its flicker
     * against the previous evaluation, or NaN at the first evaluation or when no pixel was static.
     */
    public double measure(int k, float[] reconLog, AffineFit fit) {
        float[] previous = previousFitted[k];
        boolean compare = havePrevious[k];
        double sum = 0;
        int count = 0;
        double a = fit.scale();
        double b = fit.offset();
        for (int i = 0; i < pixels; i++) {
            float fitted = (float) (a * reconLog[i] + b);
            if (compare && Math.abs(currentTruth[i] - previousTruth[i]) < STATIC_LOG) {
                sum += Math.abs(fitted - previous[i]);
                count++;
            }
            previous[i] = fitted;
        }
        havePrevious[k] = true;
        return count > 0 ? sum / count : Double.NaN;
    }
}
