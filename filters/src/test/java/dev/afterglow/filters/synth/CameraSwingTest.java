package dev.afterglow.filters.synth;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

class CameraSwingTest {
    private static final double A = 0.013;
    private static final double B = -0.007;

    /** A panorama that is a linear function of position, which bilinear sampling reproduces exactly. */
    private static float[] linear(int w, int h) {
        float[] p = new float[w * h];
        for (int v = 0; v < h; v++) {
            for (int u = 0; u < w; u++) {
                p[v * w + u] = (float) (A * (u + 0.5) + B * (v + 0.5));
            }
        }
        return p;
    }

    private static float[] view(CameraMotion camera, int w, int h, long timeUs) {
        float[] out = new float[w * h];
        for (int y = 0; y < h; y++) {
            camera.renderRow(timeUs, y, 0, w, out, y * w);
        }
        return out;
    }

    /**
     * The value at view pixel (x, y) must be that of the panorama point c + s R(θ) (p - c): the
     * rotation of a point about a pivot (plane geometry). With a linear panorama the difference
     * between two pixels is A du + B dv of their mapped positions, whatever the panorama's origin.
     */
    private static void assertMapped(float[] img, int w, int h, double cx, double cy, double theta, double s) {
        double cos = s * Math.cos(theta);
        double sin = s * Math.sin(theta);
        double ref = img[(h / 2) * w + w / 2];
        double ru = cos * (w / 2 + 0.5 - cx) - sin * (h / 2 + 0.5 - cy);
        double rv = sin * (w / 2 + 0.5 - cx) + cos * (h / 2 + 0.5 - cy);
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                double u = cos * (x + 0.5 - cx) - sin * (y + 0.5 - cy);
                double v = sin * (x + 0.5 - cx) + cos * (y + 0.5 - cy);
                assertEquals(ref + A * (u - ru) + B * (v - rv), img[y * w + x], 2e-5, "pixel " + x + "," + y);
            }
        }
    }

    @Test
    void aSteadySpinTurnsTheViewAboutItsPivot() {
        int w = 40;
        int h = 30;
        CameraSwing spin = CameraSwing.spin(w, h, 17, 12.5, 2.0, CameraSwingTest::linear);
        assertMapped(view(spin, w, h, 0), w, h, 17, 12.5, 0, 1);
        assertMapped(view(spin, w, h, 250_000), w, h, 17, 12.5, 0.5, 1);
        assertMapped(view(spin, w, h, 1_000_000), w, h, 17, 12.5, 2.0, 1);
        int[] rects = new int[4];
        assertEquals(1, spin.changedRegions(0, 1, rects));
        // the corner farthest from the pivot moves fastest: 2 rad/s x its distance
        assertEquals(2.0 * Math.hypot(23, 17.5), spin.maxSpeedPxPerS(), 1e-9);
    }

    @Test
    void aSwingTurnsAndScalesThenHoldsThenComesBack() {
        int w = 36;
        int h = 28;
        long move = 400_000;
        long hold = 200_000;
        CameraSwing swing = CameraSwing.swing(w, h, 20, 10, 0.6, 0.4, move, hold, CameraSwingTest::linear);
        assertMapped(view(swing, w, h, 0), w, h, 20, 10, 0, 1);
        assertMapped(view(swing, w, h, move / 2), w, h, 20, 10, 0.3, Math.exp(0.2)); // (1 - cos(π/2))/2 = 1/2
        assertMapped(view(swing, w, h, move + hold / 2), w, h, 20, 10, 0.6, Math.exp(0.4));
        assertMapped(view(swing, w, h, 2 * move + hold + 1), w, h, 20, 10, 0, 1);
        int[] rects = new int[4];
        assertEquals(0, swing.changedRegions(move + 1, move + hold - 1, rects), "still while it holds");
        assertEquals(1, swing.changedRegions(move / 3, move / 2, rects));
        assertTrue(swing.maxSpeedPxPerS() > 0);
    }

    @Test
    void theImageNeverMovesFasterThanTheStatedBound() {
        int w = 48;
        int h = 36;
        CameraSwing swing = CameraSwing.swing(w, h, 30, 8, -1.1, -0.5, 300_000, 0, CameraSwingTest::linear);
        // With a linear panorama a pixel's value changes at |gradient| x its image speed at most.
        double bound = swing.maxSpeedPxPerS() * Math.hypot(A, B);
        long step = 1_000;
        float[] before = view(swing, w, h, 0);
        double fastest = 0;
        for (long t = step; t <= 600_000; t += step) {
            float[] now = view(swing, w, h, t);
            for (int i = 0; i < now.length; i++) {
                fastest = Math.max(fastest, Math.abs(now[i] - before[i]) / (step * 1e-6));
            }
            before = now;
        }
        assertTrue(fastest <= bound * 1.001, "fastest " + fastest + " bound " + bound);
        assertTrue(fastest > 0.5 * bound, "the bound is not loose: fastest " + fastest + " bound " + bound);
    }

    @Test
    void aSpinNeedsARate() {
        assertThrows(IllegalArgumentException.class, () -> CameraSwing.spin(32, 24, 16, 12, 0, CameraSwingTest::linear));
    }
}
