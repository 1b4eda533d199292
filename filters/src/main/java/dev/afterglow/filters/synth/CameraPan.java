package dev.afterglow.filters.synth;

/**
 * A camera panning over a precomputed panorama: it moves by an amplitude with the timing of a
 * {@link MotionProfile} (smooth start and stop, holds), and each row is a bilinear sample of the
 * panorama at the camera's offset (the same weights for every pixel). The pan scenes build their
 * panorama and leave the motion to this class. Immutable.
 */
final class CameraPan implements CameraMotion {
    private final int width;
    private final int height;
    private final double amplitudeX;
    private final double amplitudeY;
    private final MotionProfile profile;
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
        this.profile = new MotionProfile(moveUs, holdUs);
        this.backwards = backwards;
        this.panoWidth = width + (int) Math.ceil(amplitudeX) + 3;
        int panoHeight = height + (int) Math.ceil(amplitudeY) + 3;
        this.pano = painter.paint(panoWidth, panoHeight);
    }

    @Override
    public double maxSpeedPxPerS() {
        return StrictMath.hypot(amplitudeX, amplitudeY) * profile.peakRatePerS();
    }

    @Override
    public void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset) {
        double f = backwards ? 1 - profile.fraction(timeUs) : profile.fraction(timeUs);
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
    @Override
    public int changedRegions(long fromUs, long toUs, int[] rects) {
        return profile.stillBetween(fromUs, toUs) ? 0 : CameraMotion.wholeView(width, height, rects);
    }
}
