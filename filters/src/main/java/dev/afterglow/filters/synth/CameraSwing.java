package dev.afterglow.filters.synth;

/**
 * A camera that rolls and zooms about a point of its view over a precomputed panorama: the pixel
 * at view position p shows the panorama at {@code c + s R(θ) (p - c)}, with c the pivot, R a
 * rotation and s a scale, sampled bilinearly. Either a swing (θ and log s go from 0 to their
 * amplitudes and back with the timing of a {@link MotionProfile}, holds included) or a steady
 * spin (θ = ω t, no zoom, never still). Image speed grows with the distance from the pivot, so
 * one view holds slow and fast motion at once. Immutable.
 */
final class CameraSwing implements CameraMotion {
    private final int width;
    private final int height;
    private final double pivotX;
    private final double pivotY;
    private final double angle;
    private final double logZoom;
    private final double spinRadPerS;
    private final MotionProfile profile;
    private final int panoSide;
    private final double panoCentre;
    private final float[] pano;
    private final double maxSpeed;

    private CameraSwing(int width, int height, double pivotX, double pivotY, double angle, double logZoom,
            double spinRadPerS, MotionProfile profile, CameraMotion.Painter painter) {
        this.width = width;
        this.height = height;
        this.pivotX = pivotX;
        this.pivotY = pivotY;
        this.angle = angle;
        this.logZoom = logZoom;
        this.spinRadPerS = spinRadPerS;
        this.profile = profile;
        double reach = Math.max(StrictMath.hypot(Math.max(pivotX, width - pivotX), Math.max(pivotY, height - pivotY)), 1);
        double scale = Math.exp(Math.max(0, logZoom));
        this.panoSide = 2 * (int) Math.ceil(reach * scale) + 6;
        this.panoCentre = panoSide / 2.0;
        this.pano = painter.paint(panoSide, panoSide);
        double turnRate = spinRadPerS != 0 ? Math.abs(spinRadPerS) : Math.abs(angle) * profile.peakRatePerS();
        double zoomRate = Math.abs(logZoom) * profile.peakRatePerS();
        this.maxSpeed = reach * scale * (turnRate + zoomRate);
    }

    /**
     * A swing: the view turns by {@code angle} radians and scales by {@code exp(logZoom)} over
     * {@code moveUs}, holds {@code holdUs}, and comes back.
     */
    static CameraSwing swing(int width, int height, double pivotX, double pivotY, double angle, double logZoom,
            long moveUs, long holdUs, CameraMotion.Painter painter) {
        return new CameraSwing(width, height, pivotX, pivotY, angle, logZoom, 0, new MotionProfile(moveUs, holdUs),
                painter);
    }

    /** A steady spin at {@code radPerS} (not 0) about the pivot. */
    static CameraSwing spin(int width, int height, double pivotX, double pivotY, double radPerS,
            CameraMotion.Painter painter) {
        if (radPerS == 0) {
            throw new IllegalArgumentException("a spin needs a rate");
        }
        return new CameraSwing(width, height, pivotX, pivotY, 0, 0, radPerS, new MotionProfile(1, 0), painter);
    }

    /** True for a steady spin, false for a swing. */
    boolean steady() {
        return spinRadPerS != 0;
    }

    @Override
    public double maxSpeedPxPerS() {
        return maxSpeed;
    }

    @Override
    public void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset) {
        double theta;
        double s;
        if (spinRadPerS != 0) {
            theta = spinRadPerS * (timeUs * 1e-6);
            s = 1;
        } else {
            double f = profile.fraction(timeUs);
            theta = angle * f;
            s = Math.exp(logZoom * f);
        }
        double cos = s * StrictMath.cos(theta);
        double sin = s * StrictMath.sin(theta);
        double dy = y + 0.5 - pivotY;
        double dx = x0 + 0.5 - pivotX;
        // panorama coordinates of the pixel centre, with pixel centres at integer + 0.5
        double u = panoCentre + cos * dx - sin * dy - 0.5;
        double v = panoCentre + sin * dx + cos * dy - 0.5;
        float[] p = pano;
        int last = panoSide - 2;
        for (int x = x0; x < x1; x++) {
            double uc = Math.min(Math.max(u, 0), last);
            double vc = Math.min(Math.max(v, 0), last);
            int iu = (int) uc;
            int iv = (int) vc;
            float fu = (float) (uc - iu);
            float fv = (float) (vc - iv);
            int r0 = iv * panoSide + iu;
            int r1 = r0 + panoSide;
            float top = p[r0] + fu * (p[r0 + 1] - p[r0]);
            float bottom = p[r1] + fu * (p[r1 + 1] - p[r1]);
            out[offset + x - x0] = top + fv * (bottom - top);
            u += cos;
            v += sin;
        }
    }

    @Override
    public int changedRegions(long fromUs, long toUs, int[] rects) {
        if (spinRadPerS == 0 && profile.stillBetween(fromUs, toUs)) {
            return 0;
        }
        return CameraMotion.wholeView(width, height, rects);
    }
}
