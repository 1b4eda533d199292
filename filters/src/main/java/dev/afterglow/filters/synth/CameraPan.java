package dev.afterglow.filters.synth;

/**
 * A camera panning over a precomputed panorama: it moves by an amplitude over {@code moveUs} with
 * a smooth start and stop ({@code (1 - cos)/2}), holds {@code holdUs}, moves back and holds again,
 * and each row is a bilinear sample of the panorama at the camera's offset (the same weights for
 * every pixel). The pan scenes build their panorama and leave the motion to this class.
 * Immutable.
 */
final class CameraPan {
    /** Draws a panorama of {@code width} x {@code height} log irradiance values, row-major. */
    interface Painter {
        float[] paint(int width, int height);
    }

    private final int width;
    private final int height;
    private final double amplitudeX;
    private final double amplitudeY;
    private final long moveUs;
    private final long holdUs;
    private final long cycleUs;
    private final boolean backwards;
    private final int panoWidth;
    private final float[] pano;

    /**
     * @param amplitudeX horizontal travel in pixels
     * @param amplitudeY vertical travel in pixels
     * @param backwards true: the view's offset into the panorama starts at the amplitude and
     *     shrinks (the camera pans left); false: it starts at 0 and grows
     * @param painter draws the panorama, big enough for the view at any offset
     */
    CameraPan(int width, int height, double amplitudeX, double amplitudeY, long moveUs, long holdUs,
            boolean backwards, Painter painter) {
        this.width = width;
        this.height = height;
        this.amplitudeX = amplitudeX;
        this.amplitudeY = amplitudeY;
        this.moveUs = moveUs;
        this.holdUs = holdUs;
        this.cycleUs = 2 * (moveUs + holdUs);
        this.backwards = backwards;
        this.panoWidth = width + (int) Math.ceil(amplitudeX) + 3;
        int panoHeight = height + (int) Math.ceil(amplitudeY) + 3;
        this.pano = painter.paint(panoWidth, panoHeight);
    }

    /** How far the camera has moved at {@code timeUs}, 0 .. 1 of the amplitude. */
    double fraction(long timeUs) {
        long t = Math.floorMod(timeUs, cycleUs);
        if (t < moveUs) {
            return (1 - StrictMath.cos(Math.PI * t / moveUs)) / 2;
        }
        if (t < moveUs + holdUs) {
            return 1;
        }
        if (t < 2 * moveUs + holdUs) {
            return (1 + StrictMath.cos(Math.PI * (t - moveUs - holdUs) / moveUs)) / 2;
        }
        return 0;
    }

    /** Upper bound of the image speed: the peak of A·(1 - cos(πt/T))/2 is A·π/(2T). */
    double maxSpeedPxPerS() {
        return StrictMath.hypot(amplitudeX, amplitudeY) * Math.PI / (2 * moveUs * 1e-6);
    }

    /** Writes row {@code y}, columns [x0, x1), of the view at {@code timeUs} into {@code out[offset ..]}. */
    void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset) {
        double f = backwards ? 1 - fraction(timeUs) : fraction(timeUs);
        double ox = amplitudeX * f;
        double oy = amplitudeY * f;
        int ix = (int) ox;
        int iy = (int) oy;
        float fx = (float) (ox - ix);
        float fy = (float) (oy - iy);
        float gx = 1 - fx;
        float gy = 1 - fy;
        int r0 = (y + iy) * panoWidth + ix;
        int r1 = r0 + panoWidth;
        float[] p = pano;
        for (int x = x0; x < x1; x++) {
            float top = gx * p[r0 + x] + fx * p[r0 + x + 1];
            float bottom = gx * p[r1 + x] + fx * p[r1 + x + 1];
            out[offset + x - x0] = gy * top + fy * bottom;
        }
    }

    /** The whole view, unless both ends lie in the same hold of the same cycle (then nothing changes). */
    int changedRegions(long fromUs, long toUs, int[] rects) {
        int h0 = hold(fromUs);
        if (Math.floorDiv(fromUs, cycleUs) == Math.floorDiv(toUs, cycleUs) && h0 >= 0 && h0 == hold(toUs)) {
            return 0;
        }
        rects[0] = 0;
        rects[1] = 0;
        rects[2] = width;
        rects[3] = height;
        return 1;
    }

    /** Which hold {@code timeUs} falls in (0 or 1), or -1 while the camera moves. */
    private int hold(long timeUs) {
        long t = Math.floorMod(timeUs, cycleUs);
        if (t >= moveUs && t < moveUs + holdUs) {
            return 0;
        }
        return t >= 2 * moveUs + holdUs ? 1 : -1;
    }
}
