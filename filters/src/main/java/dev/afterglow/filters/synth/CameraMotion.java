package dev.afterglow.filters.synth;

/** A camera moving over a precomputed panorama: what a scene's background looks like over time. */
interface CameraMotion {
    /** Draws a panorama of {@code width} x {@code height} log irradiance values, row-major. */
    interface Painter {
        float[] paint(int width, int height);
    }

    /** Upper bound of the image speed, pixels per second. */
    double maxSpeedPxPerS();

    /** Writes row {@code y}, columns [x0, x1), of the view at {@code timeUs} into {@code out[offset ..]}. */
    void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset);

    /** Writes the whole view as one rectangle and returns 1 if the view may change in [fromUs, toUs], else 0. */
    int changedRegions(long fromUs, long toUs, int[] rects);

    /** Writes the whole view of {@code width} x {@code height} as the one changed rectangle. */
    static int wholeView(int width, int height, int[] rects) {
        rects[0] = 0;
        rects[1] = 0;
        rects[2] = width;
        rects[3] = height;
        return 1;
    }
}
