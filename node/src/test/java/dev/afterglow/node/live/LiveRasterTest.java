package dev.afterglow.node.live;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import dev.afterglow.filters.EventBatch;
import org.junit.jupiter.api.Test;

/**
 * The live image geometry, activity accumulation and shrinking against small cases worked out by
 * hand (integer arithmetic: block sums, means rounded half up, counts clamped to a signed byte).
 */
class LiveRasterTest {

    @Test
    void shouldPickSmallestIntegerFactorThatFitsTheWidth() {
        // ceil(width / limit), worked by hand.
        assertEquals(1, LiveRaster.factorFor(64, 320));
        assertEquals(1, LiveRaster.factorFor(320, 320));
        assertEquals(2, LiveRaster.factorFor(321, 320));
        assertEquals(2, LiveRaster.factorFor(640, 320));
        assertEquals(3, LiveRaster.factorFor(641, 320));
        assertEquals(4, LiveRaster.factorFor(1280, 320));
        LiveRaster vga = new LiveRaster(640, 480, LiveRaster.MAX_WIDTH);
        assertEquals(2, vga.factor());
        assertEquals(320, vga.width());
        assertEquals(240, vga.height());
        LiveRaster odd = new LiveRaster(1000, 750, LiveRaster.MAX_WIDTH); // factor 4: 250 x 187 (floor)
        assertEquals(4, odd.factor());
        assertEquals(250, odd.width());
        assertEquals(187, odd.height());
    }

    @Test
    void shouldSumSignedEventsPerBlockAndLeaveOutTheCroppedEdge() {
        // 5x5 sensor, width limit 3: factor 2, live image 2x2; column 4 and row 4 are left out.
        LiveRaster r = new LiveRaster(5, 5, 3);
        assertEquals(2, r.factor());
        assertEquals(2, r.width());
        assertEquals(2, r.height());
        EventBatch b = new EventBatch(64);
        b.reset(0);
        // Block (0,0) = pixels x 0..1, y 0..1: +1 +1 -1 = +1
        b.add(0, 0, 1, +1);
        b.add(1, 1, 2, +1);
        b.add(1, 0, 3, -1);
        // Block (1,0) = x 2..3, y 0..1: +3
        b.add(2, 0, 4, +1);
        b.add(3, 1, 5, +1);
        b.add(3, 1, 6, +1);
        // Block (0,1) = x 0..1, y 2..3: -2
        b.add(0, 2, 7, -1);
        b.add(1, 3, 8, -1);
        // Block (1,1) = x 2..3, y 2..3: +1 -1 = 0
        b.add(2, 2, 9, +1);
        b.add(3, 3, 10, -1);
        // Outside the live image (column 4 or row 4): not counted in any block.
        b.add(4, 4, 11, +1);
        b.add(4, 0, 12, +1);
        b.add(2, 4, 13, -1);
        int[] activity = new int[r.activityLength()];
        r.accumulate(b, activity);
        r.accumulate(b, activity); // a second batch adds up
        byte[] packed = new byte[r.pixels()];
        r.packActivity(activity, packed);
        assertArrayEquals(new byte[] {2, 6, -4, 0}, packed);
    }

    @Test
    void shouldClampCountsToASignedByte() {
        LiveRaster r = new LiveRaster(4, 2, 2); // factor 2: 2x1
        EventBatch b = new EventBatch(400);
        b.reset(0);
        for (int i = 0; i < 200; i++) {
            b.add(0, 1, i, +1); // block 0: +200 -> 127
        }
        for (int i = 0; i < 130; i++) {
            b.add(3, 0, i, -1); // block 1: -130 -> -127
        }
        int[] activity = new int[r.activityLength()];
        r.accumulate(b, activity);
        byte[] packed = new byte[r.pixels()];
        r.packActivity(activity, packed);
        assertArrayEquals(new byte[] {127, -127}, packed);
    }

    @Test
    void shouldShrinkGrayByBlockMeanRoundedHalfUp() {
        LiveRaster r = new LiveRaster(5, 5, 3); // factor 2: 2x2
        int[] img = {
            10, 20, 255, 255, 99,
            30, 41, 254, 255, 99,
            0, 0, 100, 101, 99,
            0, 2, 102, 103, 99,
            99, 99, 99, 99, 99,
        };
        byte[] gray = new byte[25];
        for (int i = 0; i < 25; i++) {
            gray[i] = (byte) img[i];
        }
        byte[] out = new byte[r.pixels()];
        r.downscaleGray(gray, out);
        // (10+20+30+41)/4 = 25.25 -> 25; (255+255+254+255)/4 = 254.75 -> 255;
        // (0+0+0+2)/4 = 0.5 -> 1 (half up); (100+101+102+103)/4 = 101.5 -> 102.
        assertArrayEquals(new byte[] {25, (byte) 255, 1, 102}, out);
    }

    @Test
    void shouldCopyGrayUnchangedWhenTheSensorFits() {
        LiveRaster r = new LiveRaster(3, 2, 320);
        assertEquals(1, r.factor());
        byte[] gray = {1, 2, 3, 4, 5, (byte) 200};
        byte[] out = new byte[r.pixels()];
        r.downscaleGray(gray, out);
        assertArrayEquals(gray, out);
        EventBatch b = new EventBatch(4);
        b.reset(0);
        b.add(2, 1, 0, -1);
        b.add(0, 0, 1, +1);
        int[] activity = new int[r.activityLength()];
        r.accumulate(b, activity);
        byte[] packed = new byte[r.pixels()];
        r.packActivity(activity, packed);
        assertArrayEquals(new byte[] {1, 0, 0, 0, 0, -1}, packed);
    }
}
