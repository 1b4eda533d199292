package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import org.junit.jupiter.api.Test;

/**
 * {@link RocCurve} on hand-made curves whose areas are known: trapezoids worked out by hand, and a
 * sampled parabola against its integral (the integral of 1 - x^2 over [0, 1] is 2/3; the trapezoid
 * rule's error for it is h^2/6 with spacing h, from the standard error term -(b-a) h^2 f''/12).
 */
class RocCurveTest {

    @Test
    void shouldGiveOneHalfForNoMeasuredPoints() {
        RocCurve c = new RocCurve(new double[0], new double[0]);
        assertEquals(2, c.size());
        assertEquals(0.5, c.area(), 1e-15);
        assertEquals(-1, c.bestAtRemoved(0.9));
    }

    @Test
    void shouldAddTheEndPointsPassAllAndDropAll() {
        RocCurve c = new RocCurve(new double[] {0.5}, new double[] {1});
        assertEquals(0, c.removed(0));
        assertEquals(1, c.kept(0));
        assertEquals(1, c.removed(2));
        assertEquals(0, c.kept(2));
        // 0.5 x 1 (flat) + 0.5 x (1 + 0) / 2.
        assertEquals(0.75, c.area(), 1e-15);
    }

    @Test
    void shouldGiveOneForAPerfectDenoiserAndTheDiagonalForAUselessOne() {
        assertEquals(1.0, new RocCurve(new double[] {1}, new double[] {1}).area(), 1e-15);
        assertEquals(0.5, new RocCurve(new double[] {0.25, 0.5, 0.75}, new double[] {0.75, 0.5, 0.25}).area(), 1e-15);
        assertEquals(0.0, new RocCurve(new double[] {0, 1}, new double[] {0, 0}).area(), 1e-15);
    }

    @Test
    void shouldSortPointsByNoiseRemovedBeforeSumming() {
        // (0,1)-(0.2,0.9): 0.2 x 0.95 = 0.19; (0.2,0.9)-(0.8,0.6): 0.6 x 0.75 = 0.45; (0.8,0.6)-(1,0): 0.2 x 0.3 = 0.06.
        RocCurve c = new RocCurve(new double[] {0.8, 0.2}, new double[] {0.6, 0.9});
        assertEquals(0.70, c.area(), 1e-15);
        assertEquals(0.2, c.removed(1));
        assertEquals(1, c.source(1));
        assertEquals(0, c.source(2));
        assertEquals(-1, c.source(0));
    }

    @Test
    void shouldNotTakeAHullOverAPointBelowItsNeighbours() {
        // (0,1)-(0.5,0.2): 0.5 x 0.6 = 0.3; (0.5,0.2)-(0.6,0.9): 0.1 x 0.55 = 0.055; (0.6,0.9)-(1,0): 0.4 x 0.45 = 0.18.
        assertEquals(0.535, new RocCurve(new double[] {0.5, 0.6}, new double[] {0.2, 0.9}).area(), 1e-15);
    }

    @Test
    void shouldApproachTheIntegralOfASampledCurve() {
        int n = 999;
        double[] x = new double[n];
        double[] y = new double[n];
        for (int i = 0; i < n; i++) {
            x[i] = (i + 1) / (n + 1.0);
            y[i] = 1 - x[i] * x[i];
        }
        double h = 1.0 / (n + 1);
        double area = new RocCurve(x, y).area();
        assertEquals(2.0 / 3.0 - h * h / 6, area, 1e-12);
    }

    @Test
    void shouldPickTheMostSignalAmongPointsRemovingEnoughNoise() {
        RocCurve c = new RocCurve(new double[] {0.95, 0.85, 0.92, 0.99}, new double[] {0.7, 0.99, 0.8, 0.4});
        assertEquals(2, c.bestAtRemoved(0.9));
        assertEquals(1, c.bestAtRemoved(0.8));
        assertEquals(3, c.bestAtRemoved(0.99));
        assertEquals(-1, c.bestAtRemoved(0.995));
        // Equal signal kept: the one removing more noise.
        assertEquals(1, new RocCurve(new double[] {0.91, 0.93}, new double[] {0.8, 0.8}).bestAtRemoved(0.9));
    }

    @Test
    void shouldRefuseSharesOutsideZeroToOneAndMismatchedLengths() {
        assertThrows(IllegalArgumentException.class, () -> new RocCurve(new double[] {1.1}, new double[] {0.5}));
        assertThrows(IllegalArgumentException.class, () -> new RocCurve(new double[] {0.5}, new double[] {-0.1}));
        assertThrows(IllegalArgumentException.class, () -> new RocCurve(new double[] {Double.NaN}, new double[] {0.5}));
        assertThrows(IllegalArgumentException.class, () -> new RocCurve(new double[] {0.5, 0.6}, new double[] {0.5}));
    }
}
