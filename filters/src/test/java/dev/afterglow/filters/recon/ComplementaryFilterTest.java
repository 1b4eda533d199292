package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.RandomEventStream;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link ComplementaryFilter} against a naive double-precision reference of the published
 * filter (C. Scheerlinck, N. Barnes and R. Mahony, "Continuous-time intensity estimation using
 * event cameras", ACCV 2018): per pixel, between updates L relaxes to the frame's L_F as
 * {@code L_F + exp(-a (t - t_last)) (L - L_F)}; an event adds {@code p C}; a frame at t_f first
 * decays L to t_f with the old L_F and cut-off, then swaps in the new L_F and the pixel's class
 * (class 1, saturated or dark, gets the low cut-off as in the paper).
 *
 * <p>Frames are given both as log images with classes and as real 8-bit (and 12-bit) pixel
 * buffers; for the latter the naive side converts each pixel with the formula and thresholds that
 * {@link SensorFrameLog} documents: {@code L_F = ln((v + 1) / (M + 1))}, saturated when
 * {@code v / M >= saturated}, dark when {@code v / M <= dark}. Readouts must agree within 1e-4 C
 * plus one float ulp of the value (the readout's own float rounding).
 */
class ComplementaryFilterTest {

    /** Naive complementary filter: double state and long times per pixel. */
    static final class NaiveComplementary {
        private final int width;
        private final double contrast;
        private final double[] alphaPerUs;
        private final double[] level;
        private final double[] frameLevel;
        private final int[] cls;
        private final long[] lastUs;

        NaiveComplementary(int width, int height, double contrast, double cutoff, double lowCutoff) {
            this.width = width;
            this.contrast = contrast;
            this.alphaPerUs = new double[] {cutoff / 1e6, lowCutoff / 1e6};
            int n = width * height;
            level = new double[n];
            frameLevel = new double[n];
            cls = new int[n];
            lastUs = new long[n];
        }

        private double decayed(int i, long t) {
            return frameLevel[i] + Math.exp(-alphaPerUs[cls[i]] * (t - lastUs[i])) * (level[i] - frameLevel[i]);
        }

        void event(int x, int y, long t, int p) {
            int i = y * width + x;
            level[i] = decayed(i, t) + p * contrast;
            lastUs[i] = t;
        }

        void frame(long t, double[] logIntensity, int[] pixelClass) {
            for (int i = 0; i < level.length; i++) {
                level[i] = decayed(i, t);
                lastUs[i] = t;
                frameLevel[i] = logIntensity[i];
                cls[i] = pixelClass[i];
            }
        }

        double read(int i, long t) {
            return decayed(i, t);
        }
    }

    /** Documented conversion of a frame pixel value at {@code bits} to log intensity. */
    static double naiveLog(int v, int bits) {
        double full = (1 << bits) - 1;
        return Math.log((v + 1) / (full + 1));
    }

    /** Documented class of a frame pixel: 1 if saturated or dark. */
    static int naiveClass(int v, int bits, double saturated, double dark) {
        double full = (1 << bits) - 1;
        return v / full >= saturated || v / full <= dark ? 1 : 0;
    }

    /** How frames are given to the filter under test. */
    enum FrameKind {
        LOG, PIXELS_8, PIXELS_12, MIXED
    }

    static final double SATURATED = 0.95;
    static final double DARK = 0.05;

    /** Runs an ordered stream with frames between batches; returns the largest |L - L_F| seen in C units. */
    static double checkAgainstNaive(RandomEventStream s, double contrast, double cutoff, double lowCutoff,
            FrameKind kind, long seed, double frameChance) {
        int w = s.width;
        int n = w * s.height;
        ComplementaryFilter fast = new ComplementaryFilter(w, s.height, contrast, cutoff, lowCutoff, SATURATED, DARK);
        NaiveComplementary naive = new NaiveComplementary(w, s.height, contrast, cutoff, lowCutoff);
        SplittableRandom rnd = new SplittableRandom(seed);
        float[] out = new float[n];
        float[] logFrame = new float[n];
        byte[] classFrame = new byte[n];
        double[] naiveFrame = new double[n];
        int[] naiveClasses = new int[n];
        EventBatch batch = s.newBatch();
        long latest = s.batchBase(0) - rnd.nextLong(1_000_000);
        long clock = latest; // frames and readouts never go back in time
        int readouts = 0;
        int frames = 0;
        int lowClassPixels = 0;
        double largest = 0;
        double tolerance = 1e-4 * contrast;
        for (int b = -1; b < s.batches; b++) {
            if (b >= 0) {
                s.fill(b, batch);
                fast.process(batch);
                for (int i = s.batchFrom(b); i < s.batchTo(b); i++) {
                    naive.event(s.x[i], s.y[i], s.t[i], s.p[i]);
                    latest = Math.max(latest, s.t[i]);
                }
            }
            long next = b + 1 < s.batches
                    ? (s.batchTo(b + 1) > s.batchFrom(b + 1) ? s.t[s.batchFrom(b + 1)] : s.batchBase(b + 1))
                    : latest + 10_000_000;
            long at = Math.max(latest, clock);
            if (next < at) {
                next = at;
            }
            if (b == -1 || rnd.nextDouble() < frameChance) {
                at += rnd.nextLong(Math.max(1, (next - at) / 2 + 1));
                FrameKind k = kind == FrameKind.MIXED ? FrameKind.values()[rnd.nextInt(3)] : kind;
                makeFrame(k, rnd, at, fast, naive, logFrame, classFrame, naiveFrame, naiveClasses);
                frames++;
                for (int c : naiveClasses) {
                    lowClassPixels += c;
                }
            }
            if (b >= 0 && rnd.nextInt(4) != 0) {
                for (int r = rnd.nextInt(3); r >= 0; r--) {
                    at += rnd.nextLong(Math.max(1, (next - at) / 2 + 1));
                    fast.readLog(at, out);
                    readouts++;
                    for (int i = 0; i < n; i++) {
                        double want = naive.read(i, at);
                        largest = Math.max(largest, Math.abs(want - naive.frameLevel[i]) / contrast);
                        if (!(Math.abs(out[i] - want) <= tolerance + Math.ulp((float) want))) {
                            fail("cutoff " + cutoff + "/" + lowCutoff + "rad/s, pixel (" + (i % w) + ", " + (i / w)
                                    + ") class " + naive.cls[i] + " at " + at + "us: got " + out[i] + ", naive " + want
                                    + ", |diff|/C = " + Math.abs(out[i] - want) / contrast + " (late events " + fast.lateEvents()
                                    + ", frames " + frames + ")");
                        }
                    }
                }
            }
            clock = at;
        }
        assertEquals(0, fast.lateEvents(), "an ordered stream has no late events");
        assertEquals(frames, fast.framesApplied());
        assertTrue(readouts > 20, "readouts: " + readouts);
        assertTrue(frames > 3, "frames: " + frames);
        assertTrue(lowClassPixels > 0, "some frame pixels must be saturated or dark");
        return largest;
    }

    /** A random frame with well-exposed, saturated and dark pixels, applied to both filters at {@code at}. */
    static void makeFrame(FrameKind kind, SplittableRandom rnd, long at, ComplementaryFilter fast, NaiveComplementary naive,
            float[] logFrame, byte[] classFrame, double[] naiveFrame, int[] naiveClasses) {
        int n = logFrame.length;
        if (kind == FrameKind.LOG) {
            for (int i = 0; i < n; i++) {
                logFrame[i] = (float) (-6 * rnd.nextDouble());
                classFrame[i] = (byte) (rnd.nextInt(8) == 0 ? 1 : 0);
                naiveFrame[i] = logFrame[i];
                naiveClasses[i] = classFrame[i];
            }
            fast.applyLogFrame(at, logFrame, classFrame);
        } else {
            int bits = kind == FrameKind.PIXELS_8 ? 8 : 12;
            int full = (1 << bits) - 1;
            int bytesPer = bits == 8 ? 1 : 2;
            // Put the pixels at a non-zero position of a larger buffer to check position handling.
            int offset = rnd.nextInt(5);
            ByteBuffer buf = ByteBuffer.allocate(offset + n * bytesPer + 3).order(ByteOrder.LITTLE_ENDIAN);
            buf.position(offset);
            for (int i = 0; i < n; i++) {
                int u = rnd.nextInt(10);
                int v = u == 0 ? full - rnd.nextInt(full / 16) : (u == 1 ? rnd.nextInt(full / 16) : rnd.nextInt(full + 1));
                if (bytesPer == 1) {
                    buf.put((byte) v);
                } else {
                    buf.putShort((short) v);
                }
                naiveFrame[i] = naiveLog(v, bits);
                naiveClasses[i] = naiveClass(v, bits, SATURATED, DARK);
            }
            buf.limit(buf.position());
            buf.position(offset);
            fast.applyFrame(at, buf, bits);
            assertEquals(offset, buf.position(), "applyFrame must not move the buffer's position");
        }
        naive.frame(at, naiveFrame, naiveClasses);
    }

    @ParameterizedTest(name = "{0}x{1} seed {2} cutoff {3}/{4}rad/s C {5} frames {6}")
    @CsvSource({
        "32, 24, 1, 5, 0.5, 0.2, PIXELS_8",
        "32, 24, 2, 5, 0.5, 0.2, LOG",
        "32, 24, 3, 0.05, 0, 0.2, PIXELS_8",
        "32, 24, 4, 500, 5, 0.3, MIXED",
        "32, 24, 5, 10000, 10000, 0.2, LOG",
        "32, 24, 6, 24, 0, 0.2, PIXELS_12",
        "40, 17, 7, 50, 0.05, 0.15, MIXED",
        "17, 40, 8, 2, 1, 0.5, PIXELS_8",
        "40, 17, 9, 0.001, 0, 0.2, MIXED",
    })
    void shouldReadOutWhatTheNaiveFilterComputes(int w, int h, long seed, double cutoff, double lowCutoff,
            double contrast, FrameKind kind) {
        RandomEventStream s = RandomEventStream.builder(w, h, seed).build();
        double largest = checkAgainstNaive(s, contrast, cutoff, lowCutoff, kind, seed, 0.35);
        assertTrue(largest >= 1, "some pixel must be at least C away from its frame level, got " + largest + " C");
    }

    @Test
    void shouldRelaxToTheFrameWithTheCutoffOfEachPixelsClass() {
        // The paper's closed form between events, L(t) = L_F + exp(-a (t - t_k)) (L(t_k) - L_F), with
        // a the cut-off for well-exposed pixels and the low cut-off for saturated or dark ones. State
        // starts at L = 0; the frame at 1 s sets L_F; one ON event at 1.5 s; readout at 1.6 s.
        ComplementaryFilter f = new ComplementaryFilter(3, 1, 0.2, 10, 1, SATURATED, DARK);
        f.applyFrame(1_000_000, ByteBuffer.wrap(new byte[] {(byte) 128, (byte) 255, 0}), 8);
        EventBatch b = new EventBatch(3);
        b.reset(1_500_000);
        for (int x = 0; x < 3; x++) {
            b.add(x, 0, 1_500_000, 1);
        }
        f.process(b);
        float[] out = new float[3];
        f.readLog(1_600_000, out);
        int[] values = {128, 255, 0};
        double[] cutoffs = {10, 1, 1};
        String[] what = {"well exposed: a = 10 rad/s", "saturated: low cut-off 1 rad/s", "dark: low cut-off 1 rad/s"};
        for (int x = 0; x < 3; x++) {
            double lf = Math.log((values[x] + 1) / 256.0);
            double atEvent = lf + Math.exp(-cutoffs[x] * 0.5) * (0 - lf) + 0.2;
            double want = lf + Math.exp(-cutoffs[x] * 0.1) * (atEvent - lf);
            assertEquals(want, out[x], 1e-5, what[x]);
        }
    }
}
