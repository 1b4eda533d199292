package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

class FlickerMeterTest {

    @Test
    void countsOnlyStaticPixelsAndUsesTheFittedImage() {
        int n = 4;
        FlickerMeter meter = new FlickerMeter(n, 2);
        float[] truth0 = {0, 1, 2, 3};
        float[] truth1 = {0, 1, 2, 3.5f}; // the last pixel moves: not static
        float[] steady = {1, 1, 1, 1};
        float[] a = {0, 0, 0, 0};
        float[] b = {0.1f, -0.2f, 0.3f, 5};
        AffineFit twice = new AffineFit(2, 1);

        meter.truth(truth0);
        assertTrue(Double.isNaN(meter.measure(0, steady, twice)), "no previous evaluation yet");
        assertTrue(Double.isNaN(meter.measure(1, a, twice)));
        meter.truth(truth1);
        assertEquals(0, meter.measure(0, steady, twice), 1e-12, "an unchanging image does not flicker");
        // Fitted change = 2 * |b - a| on the three static pixels: 2 * (0.1 + 0.2 + 0.3) / 3.
        assertEquals(2 * 0.6 / 3, meter.measure(1, b, twice), 1e-6);
    }

    @Test
    void nothingStaticGivesNaN() {
        FlickerMeter meter = new FlickerMeter(2, 1);
        meter.truth(new float[] {0, 0});
        meter.measure(0, new float[] {0, 0}, new AffineFit(1, 0));
        meter.truth(new float[] {1, 1});
        assertTrue(Double.isNaN(meter.measure(0, new float[] {0, 0}, new AffineFit(1, 0))));
    }

    @Test
    void marksThePixelsThatChangedMoreThanTheThresholdAsMoving() {
        FlickerMeter meter = new FlickerMeter(4, 1);
        byte[] moving = new byte[4];
        meter.truth(new float[] {0, 1, 2, 3});
        meter.moving(0.1, moving);
        assertEquals(0, moving[0] + moving[1] + moving[2] + moving[3], "nothing moved before a second evaluation");
        meter.truth(new float[] {0.05f, 1.2f, 2, 2.5f});
        meter.moving(0.1, moving);
        assertEquals(0, moving[0], "0.05 is below the threshold");
        assertEquals(1, moving[1]);
        assertEquals(0, moving[2]);
        assertEquals(1, moving[3], "a fall counts as much as a rise");
    }
}
