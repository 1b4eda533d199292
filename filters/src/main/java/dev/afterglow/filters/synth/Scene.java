package dev.afterglow.filters.synth;

/**
 * A scene's true log irradiance over time, as the {@link SyntheticSensor} sees it: natural log of
 * the irradiance at each pixel, in scene units (the sensor's {@code fullScale} is in the same
 * units). A scene is a pure function of time: rendering the same time twice gives the same
 * values, and times may be rendered in any order.
 *
 * <p>To keep rendering cheap a scene says which pixels can change over an interval
 * ({@link #changedRegions}); the sensor leaves all other pixels alone.
 *
 * <p>Threading: implementations hold only immutable precomputed data, so one instance may be
 * rendered from several threads.
 */
public interface Scene {

    /** Short name, e.g. {@code parcel-line}. */
    String name();

    /** Pixels per row. */
    int width();

    /** Rows. */
    int height();

    /** Upper bound of how fast anything in the image moves, in pixels per second (0: static). */
    double maxSpeedPxPerS();

    /**
     * Writes the log irradiance of row {@code y}, columns [{@code x0}, {@code x1}), at
     * {@code timeUs} into {@code out[offset .. offset + x1 - x0)}.
     */
    void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset);

    /**
     * Rectangles that together cover every pixel whose value at some time in
     * [{@code fromUs}, {@code toUs}] may differ from its value at {@code fromUs}. Each rectangle is
     * four ints {@code x0, y0, x1, y1} (end exclusive, clipped to the image) written from
     * {@code rects[0]}; rectangles may overlap.
     *
     * @param rects room for at least {@link #maxRegions()} rectangles
     * @return the number of rectangles written
     */
    int changedRegions(long fromUs, long toUs, int[] rects);

    /** Most rectangles {@link #changedRegions} ever writes. */
    int maxRegions();

    /** Writes the whole image at {@code timeUs}, row-major, into {@code out}. */
    default void render(long timeUs, float[] out) {
        int w = width();
        for (int y = 0; y < height(); y++) {
            renderRow(timeUs, y, 0, w, out, y * w);
        }
    }
}
