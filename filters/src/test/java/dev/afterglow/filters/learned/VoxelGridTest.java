package dev.afterglow.filters.learned;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.RandomEventStream;
import java.lang.management.ManagementFactory;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.FloatBuffer;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * The voxel grid against naive references on seeded streams: the published definition of the
 * grid in double precision, and the contract's float operations written out plainly; and its
 * normalisation against the textbook mean and population standard deviation.
 */
class VoxelGridTest {

    /**
     * The published voxel grid (A. Z. Zhu, L. Yuan, K. Chaney and K. Daniilidis, "Unsupervised
     * event-based learning of optical flow, depth, and egomotion", CVPR 2019, eq. 1; used by
     * Rebecq et al., TPAMI 2019): V(n, y, x) = sum over events of p * max(0, 1 - |n - t*|), with
     * t* = (B - 1)(t - t0) / (t1 - t0); here with t* clamped to [0, B - 1] (our streaming window).
     * In double, straight from the formula, every bin visited.
     */
    private static double[] publishedGrid(RandomEventStream s, int from, int to, long t0, long t1, int bins) {
        double[] g = new double[bins * s.width * s.height];
        for (int i = from; i < to; i++) {
            double tStar = (bins - 1) * (double) (s.t[i] - t0) / (double) (t1 - t0);
            tStar = Math.min(bins - 1, Math.max(0, tStar));
            for (int n = 0; n < bins; n++) {
                double k = Math.max(0, 1 - Math.abs(n - tStar));
                g[(n * s.height + s.y[i]) * s.width + s.x[i]] += s.p[i] * k;
            }
        }
        return g;
    }

    /** The contract's float operations, one event at a time, written as in the model contract. */
    private static float[] contractGrid(RandomEventStream s, int from, int to, long t0, long t1, int bins) {
        float[] g = new float[bins * s.width * s.height];
        for (int i = from; i < to; i++) {
            double tau = (bins - 1) * (double) (s.t[i] - t0) / (double) (t1 - t0);
            if (tau < 0) {
                tau = 0;
            }
            if (tau > bins - 1) {
                tau = bins - 1;
            }
            int i0 = (int) Math.floor(tau);
            float f = (float) (tau - i0);
            g[(i0 * s.height + s.y[i]) * s.width + s.x[i]] += s.p[i] * (1f - f);
            if (i0 + 1 < bins) {
                g[((i0 + 1) * s.height + s.y[i]) * s.width + s.x[i]] += s.p[i] * f;
            }
        }
        return g;
    }

    private static RandomEventStream stream(long seed, int w, int h) {
        return RandomEventStream.builder(w, h, seed).activeUs(400_000).noiseHz(2).hot(3, 200, 2_000)
                .burstHz(40).edgeHz(10).gaps(2, 1_000, 30_000).disorder(0.01, 50).batches(300, 20).build();
    }

    @ParameterizedTest
    @CsvSource({"1, 5, 37, 23, 50000", "2, 2, 64, 48, 10000", "3, 9, 20, 31, 1000", "4, 5, 346, 260, 33333"})
    void shouldMatchThePublishedGridAndTheContractsFloatOpsOnSeededStreams(long seed, int bins, int w, int h, long periodUs) {
        RandomEventStream s = stream(seed, w, h);
        VoxelGrid grid = new VoxelGrid(bins, w, h);
        EventBatch batch = s.newBatch();
        // Windows of periodUs from the first event, as the stage opens them; events are added in
        // their batches (varying sizes and time bases), which must not change a bit.
        long t0 = s.t[0];
        int windowStart = 0;
        int checked = 0;
        for (int b = 0; b < s.batches; b++) {
            s.fill(b, batch);
            grid.add(batch, t0, t0 + periodUs);
            int end = s.batchTo(b);
            boolean last = b == s.batches - 1;
            if (end > windowStart && (last || s.batchBase(b + 1) >= t0 + 2 * periodUs)) {
                // a window that also holds events past t1 (clamped into the last bin)
                float[] expectedBits = contractGrid(s, windowStart, end, t0, t0 + periodUs, bins);
                double[] published = publishedGrid(s, windowStart, end, t0, t0 + periodUs, bins);
                float[] cells = grid.cells();
                assertArrayEquals(expectedBits, cells, 0f, "contract float ops, window from " + t0);
                double worst = 0;
                for (int i = 0; i < cells.length; i++) {
                    // float accumulation of |weights| <= events at the pixel; one float ulp each (from memory, a
                    // standard rounding-error bound: n * 2^-24 * sum |terms|)
                    worst = Math.max(worst, Math.abs(cells[i] - published[i]));
                }
                assertTrue(worst < 1e-3, "published grid within float rounding: worst " + worst);
                assertEquals(end - windowStart, grid.eventsAdded());
                grid.clear();
                windowStart = end;
                t0 = last ? t0 : s.batchBase(b + 1);
                checked++;
            }
        }
        assertTrue(checked >= 2, "several windows compared: " + checked);
    }

    @Test
    void shouldConserveEachEventsPolarityAcrossItsTwoBins() {
        // The triangular kernel's weights at any t* sum to one (Zhu et al. 2019, eq. 1): every event
        // adds exactly p to the sum over bins of its pixel (up to float rounding of 1 - f + f).
        SplittableRandom r = new SplittableRandom(11);
        VoxelGrid grid = new VoxelGrid(5, 4, 3);
        EventBatch b = new EventBatch(1);
        for (int k = 0; k < 1000; k++) {
            grid.clear();
            b.reset(0);
            int p = r.nextBoolean() ? 1 : -1;
            b.add(r.nextInt(4), r.nextInt(3), r.nextLong(0, 3_000), p);
            grid.add(b, 1_000, 2_000); // many events outside the window: clamped
            double sum = 0;
            for (float c : grid.cells()) {
                sum += c;
            }
            assertEquals(p, sum, 1e-6);
        }
    }

    @Test
    void shouldPutEventsAtTheWindowsEdgesAndBinCentresIntoOneBin() {
        VoxelGrid grid = new VoxelGrid(5, 2, 1);
        EventBatch b = new EventBatch(8);
        b.reset(0);
        b.add(0, 0, 1_000, 1);   // t0: bin 0
        b.add(0, 0, 1_250, 1);   // t* = 1: bin 1
        b.add(1, 0, 1_750, -1);  // t* = 3: bin 3
        b.add(1, 0, 2_000, 1);   // t1 (outside the half-open window): clamped into bin 4
        b.add(1, 0, 9_000, 1);   // far after t1: bin 4
        b.add(0, 0, 1_125, 1);   // t* = 0.5: half in bin 0, half in bin 1
        grid.add(b, 1_000, 2_000);
        float[] c = grid.cells();
        // [bin][y=0][x]
        assertArrayEquals(new float[] {1.5f, 0, 1.5f, 0, 0, 0, 0, -1, 0, 2}, c, 0f);
    }

    @Test
    void shouldBinOnlyTheGivenRangeOfABatch() {
        SplittableRandom r = new SplittableRandom(3);
        EventBatch all = new EventBatch(200);
        all.reset(500);
        for (int i = 0; i < 200; i++) {
            all.add(r.nextInt(6), r.nextInt(4), 500 + 10L * i, r.nextBoolean() ? 1 : -1);
        }
        EventBatch middle = new EventBatch(200);
        middle.reset(500);
        for (int i = 40; i < 130; i++) {
            middle.add(all.x[i], all.y[i], 500 + 10L * i, all.p[i]);
        }
        VoxelGrid ranged = new VoxelGrid(5, 6, 4);
        VoxelGrid whole = new VoxelGrid(5, 6, 4);
        ranged.add(all, 40, 130, 900, 1_800);
        whole.add(middle, 900, 1_800);
        assertArrayEquals(whole.cells(), ranged.cells(), 0f, "events 40 .. 129 only");
        assertEquals(90, ranged.eventsAdded());
        ranged.add(all, 7, 7, 900, 1_800);
        assertEquals(90, ranged.eventsAdded(), "an empty range adds nothing");
        assertThrows(IllegalArgumentException.class, () -> ranged.add(all, 150, 201, 900, 1_800));
        assertThrows(IllegalArgumentException.class, () -> ranged.add(all, 20, 10, 900, 1_800));
    }

    @Test
    void shouldNormaliseNonZeroCellsToTheirMeanAndPopulationDeviation() {
        SplittableRandom r = new SplittableRandom(5);
        for (int k = 0; k < 50; k++) {
            float[] v = new float[3 * 17 * 11];
            for (int i = 0; i < v.length; i++) {
                v[i] = r.nextInt(3) == 0 ? (float) (r.nextGaussian() * 3 + 1) : 0f;
            }
            // Textbook statistics of the non-zero values (population variance: divide by n).
            List<Double> nonZero = new ArrayList<>();
            for (float c : v) {
                if (c != 0) {
                    nonZero.add((double) c);
                }
            }
            double mean = nonZero.stream().mapToDouble(Double::doubleValue).average().orElseThrow();
            double variance = nonZero.stream().mapToDouble(x -> (x - mean) * (x - mean)).sum() / nonZero.size();
            float[] original = v.clone();
            VoxelGrid.normalise(v);
            double sum = 0;
            double squares = 0;
            for (int i = 0; i < v.length; i++) {
                if (original[i] == 0) {
                    assertEquals(0f, v[i], "zero cells stay zero");
                } else {
                    assertEquals((original[i] - mean) / Math.sqrt(variance), v[i], 1e-5);
                    sum += v[i];
                    squares += (double) v[i] * v[i];
                }
            }
            // After normalisation the non-zero cells have mean 0 and standard deviation 1 (by definition).
            assertEquals(0, sum / nonZero.size(), 1e-6);
            assertEquals(1, squares / nonZero.size(), 1e-5);
        }
    }

    @Test
    void shouldLeaveAnEmptyGridAtZeroAndCentreAConstantOne() {
        float[] empty = new float[20];
        VoxelGrid.normalise(empty);
        assertArrayEquals(new float[20], empty, 0f);
        float[] constant = {0, 2, 0, 2, 2, -0f};
        VoxelGrid.normalise(constant); // s = 0: v - m, i.e. 0 for every non-zero cell
        for (float c : constant) {
            assertEquals(0, Float.floatToRawIntBits(c), "+0.0, no -0.0 left: " + c);
        }
    }

    @Test
    void shouldWriteTheNormalisedGridIntoThePaddedLayoutAndEmptyItself() {
        int bins = 3;
        int w = 5;
        int h = 3;
        int wp = 8;
        int hp = 4;
        VoxelGrid grid = new VoxelGrid(bins, w, h);
        EventBatch b = new EventBatch(64);
        b.reset(0);
        SplittableRandom r = new SplittableRandom(3);
        for (int i = 0; i < 40; i++) {
            b.add(r.nextInt(w), r.nextInt(h), i * 25L, r.nextBoolean() ? 1 : -1);
        }
        grid.add(b, 0, 1_000);
        float[] expected = grid.cells().clone();
        VoxelGrid.normalise(expected);
        FloatBuffer out = ByteBuffer.allocateDirect(bins * hp * wp * 4).order(ByteOrder.nativeOrder()).asFloatBuffer();
        grid.normaliseInto(out, wp, hp);
        for (int c = 0; c < bins; c++) {
            for (int y = 0; y < hp; y++) {
                for (int x = 0; x < wp; x++) {
                    float got = out.get((c * hp + y) * wp + x);
                    float want = x < w && y < h ? expected[(c * h + y) * w + x] : 0f;
                    assertEquals(want, got, 0f, "bin " + c + " y " + y + " x " + x);
                }
            }
        }
        assertEquals(0, grid.eventsAdded());
        assertArrayEquals(new float[bins * w * h], grid.cells(), 0f, "emptied for the next window");
        assertThrows(IllegalArgumentException.class, () -> grid.normaliseInto(out, w - 1, hp));
        assertThrows(IllegalArgumentException.class, () -> grid.add(b, 5, 5));
    }

    @Test
    void shouldNotAllocatePerEvent() {
        // Allocation as counted by the JVM's per-thread allocated-bytes counter (com.sun.management).
        com.sun.management.ThreadMXBean threads = (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        if (!threads.isThreadAllocatedMemorySupported()) {
            return;
        }
        threads.setThreadAllocatedMemoryEnabled(true);
        RandomEventStream s = stream(9, 346, 260);
        VoxelGrid grid = new VoxelGrid(5, 346, 260);
        EventBatch batch = s.newBatch();
        for (int b = 0; b < s.batches; b++) { // warm up
            s.fill(b, batch);
            grid.add(batch, s.t[0], s.t[0] + 50_000);
        }
        long events = 0;
        long before = threads.getCurrentThreadAllocatedBytes();
        for (int b = 0; b < s.batches; b++) {
            s.fill(b, batch);
            grid.add(batch, s.t[0], s.t[0] + 50_000);
            events += batch.size;
        }
        long allocated = threads.getCurrentThreadAllocatedBytes() - before;
        assertTrue(events > 100_000, "events " + events);
        // Even one small object per batch would show; one per event would be megabytes.
        assertTrue(allocated < 16L * s.batches + 4096, "allocated " + allocated + " bytes over " + events + " events");
    }
}
