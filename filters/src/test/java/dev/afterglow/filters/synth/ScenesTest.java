package dev.afterglow.filters.synth;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;
import org.junit.jupiter.api.Test;

class ScenesTest {

    @ParameterizedTest
    @EnumSource(SceneKind.class)
    void shouldReportEveryPixelThatChanges(SceneKind kind) {
        // The sensor only updates the rectangles a scene reports, so any change outside them would
        // be lost: render whole images at random times and compare outside the rectangles.
        int w = 96;
        int h = 72;
        Scene scene = kind.create(w, h, 11);
        SplittableRandom r = new SplittableRandom(kind.ordinal());
        float[] before = new float[w * h];
        float[] after = new float[w * h];
        boolean[] covered = new boolean[w * h];
        int[] rects = new int[4 * scene.maxRegions()];
        int changedSomewhere = 0;
        for (int trial = 0; trial < 60; trial++) {
            long t0 = r.nextLong(16_000_000);
            long t1 = t0 + 1 + r.nextLong(trial % 2 == 0 ? 2_000 : 300_000);
            int n = scene.changedRegions(t0, t1, rects);
            assertTrue(n <= scene.maxRegions());
            Arrays.fill(covered, false);
            for (int k = 0; k < n; k++) {
                for (int y = rects[4 * k + 1]; y < rects[4 * k + 3]; y++) {
                    for (int x = rects[4 * k]; x < rects[4 * k + 2]; x++) {
                        covered[y * w + x] = true;
                    }
                }
            }
            scene.render(t0, before);
            for (long t : new long[] {t1, t0 + (t1 - t0) / 3, t0 + (t1 - t0) / 2}) {
                scene.render(t, after);
                for (int i = 0; i < w * h; i++) {
                    if (!covered[i]) {
                        assertEquals(before[i], after[i], 0.0, kind + " pixel " + i + " between " + t0 + " and " + t);
                    } else if (before[i] != after[i]) {
                        changedSomewhere++;
                    }
                }
            }
        }
        assertTrue(changedSomewhere > 0, "the scene moves");
    }

    @ParameterizedTest
    @EnumSource(SceneKind.class)
    void shouldStreamAtARealisticRateAtFullSize(SceneKind kind) {
        // Requirement (common practice for this class of sensor): 1 to 20 million events per second
        // at 640x480 with the default sensor. Measured over the scene's opening seconds (for
        // orchard-pan the first pan, before the camera holds).
        int w = 640;
        int h = 480;
        long durationUs = switch (kind) {
            case PARCEL_LINE -> 1_000_000;
            case DOCK_DOOR -> 2_000_000;
            default -> 3_000_000;
        };
        SyntheticSensor sensor = new SyntheticSensor(kind.create(w, h, 7), kind.sensor(w, h).frames(0, 1).seed(7).build());
        EventBatch batch = new EventBatch(1 << 16);
        long events = 0;
        while (sensor.timeUs() < durationUs) {
            batch.reset(sensor.timeUs());
            sensor.step(Math.min(durationUs, sensor.timeUs() + 2_000), batch);
            events += batch.size;
        }
        double rate = events / (durationUs * 1e-6);
        assertTrue(rate >= 1e6 && rate <= 2e7, kind + ": " + rate + " events/s");
    }

    @ParameterizedTest
    @EnumSource(SceneKind.class)
    void shouldBuildTheSameSceneFromTheSameSeed(SceneKind kind) {
        float[] a = new float[80 * 60];
        float[] b = new float[80 * 60];
        float[] c = new float[80 * 60];
        kind.create(80, 60, 1).render(700_000, a);
        kind.create(80, 60, 1).render(700_000, b);
        kind.create(80, 60, 2).render(700_000, c);
        assertTrue(Arrays.equals(a, b));
        assertNotEquals(Arrays.hashCode(a), Arrays.hashCode(c));
        for (float v : a) {
            assertTrue(Float.isFinite(v));
        }
    }

    @Test
    void shouldSpanAHighDynamicRangeInTheDockDoorScene() {
        // The HDR scene's point: about 8 natural-log units (e^8 ≈ 3000:1) between the dim interior
        // and the sunlit yard, far beyond an 8-bit frame's 255:1.
        float[] img = new float[160 * 120];
        SceneKind.DOCK_DOOR.create(160, 120, 7).render(0, img);
        float min = Float.MAX_VALUE;
        float max = -Float.MAX_VALUE;
        for (float v : img) {
            min = Math.min(min, v);
            max = Math.max(max, v);
        }
        assertTrue(max - min > 8, "log range " + (max - min));
    }

    @Test
    void shouldRefuseUnknownNamesAndTinySizes() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> SceneKind.byLabel("lobby"));
        assertTrue(e.getMessage().contains("parcel-line, dock-door, orchard-pan"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> SceneKind.PARCEL_LINE.create(16, 16, 1));
        assertTrue(e.getMessage().contains("32x24"), e.getMessage());
        assertEquals(SceneKind.ORCHARD_PAN, SceneKind.byLabel("orchard-pan"));
    }
}
