package dev.afterglow.filters.learned;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.RandomEventStream;
import dev.afterglow.filters.chain.Chain;
import java.io.IOException;
import java.io.InputStream;
import java.lang.management.ManagementFactory;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The learned-recon stage against outputs computed outside Java and ONNX Runtime, and its
 * behaviour between inferences.
 */
class LearnedReconstructionTest {
    @TempDir
    Path dir;

    /**
     * Every fixture {@code NAME.fixture*.npz} in the test resources' {@code learned} folder, run
     * through the model {@code NAME.onnx} beside it, or the shipped model for {@code ember-3}.
     * {@code tiny-contract.fixture.npz} comes from {@code learned_test_models.py}: numpy computed the
     * voxel grids (the contract's rule), the normalisation and the tiny network's operators by hand,
     * following the stage's window rules (windows of the period on the sensor's clock from the first
     * event, each inferred once it has ended, quiet ones too; repeats in between). Fixtures of the trained model come
     * from its training script (PyTorch). The Java path (voxel grid, padding, ONNX Runtime, state
     * carried, cropping) must give the same log images within 1e-4 (absolute, log intensity: the
     * issue's tolerance), inferring at the same readouts.
     */
    @ParameterizedTest
    @MethodSource("fixtures")
    void shouldReproduceTheFixturesOfTheModelsTrainingFramework(String fixture) throws IOException {
        Map<String, Npz.Array> f;
        try (InputStream in = getClass().getResourceAsStream(TestModels.FOLDER + fixture)) {
            f = Npz.read(in);
        }
        String name = fixture.substring(0, fixture.indexOf(".fixture"));
        String model = getClass().getResource(TestModels.FOLDER + name + ".onnx") != null
                && !(TestModels.FOLDER + name + ".onnx").equals(LearnedReconstruction.BUILTIN_RESOURCE)
                ? TestModels.copy(name + ".onnx", dir).toString() : LearnedReconstruction.BUILTIN;
        int w = (int) f.get("sensor").at(0);
        int h = (int) f.get("sensor").at(1);
        long periodUs = (long) f.get("period_us").at(0);
        Npz.Array events = f.get("events");
        Npz.Array readouts = f.get("readout_us");
        float[] expected = f.get("log_image").floats();
        Npz.Array inferred = f.get("inferred");
        int n = (int) events.shape()[0];
        try (LearnedReconstruction stage = LearnedReconstruction.open(model, periodUs, 1, w, h)) {
            assertEquals(name, stage.contract().modelName(), "the fixture's model");
            SplittableRandom r = new SplittableRandom(1);
            EventBatch batch = new EventBatch(n);
            float[] out = new float[w * h];
            int next = 0;
            int inferences = 0;
            for (int k = 0; k < readouts.values().length; k++) {
                long T = (long) readouts.at(k);
                // events before T, in batches of random sizes with a time base at or before the first
                while (next < n && (long) events.at(4 * next + 2) < T) {
                    int size = 1 + r.nextInt(40);
                    batch.reset((long) events.at(4 * next + 2) - r.nextInt(5));
                    while (size-- > 0 && next < n && (long) events.at(4 * next + 2) < T) {
                        batch.add((int) events.at(4 * next), (int) events.at(4 * next + 1), (long) events.at(4 * next + 2),
                                (int) events.at(4 * next + 3));
                        next++;
                    }
                    stage.process(batch);
                }
                stage.readLog(T, out);
                boolean didInfer = stage.lastInferenceNanos() > 0;
                assertEquals(inferred.at(k) > 0, didInfer, "inference at readout " + T);
                inferences += (int) inferred.at(k); // windows inferred since the previous readout
                double worst = 0;
                for (int i = 0; i < out.length; i++) {
                    worst = Math.max(worst, Math.abs(out[i] - expected[k * w * h + i]));
                }
                assertTrue(worst <= 1e-4, fixture + ", readout " + T + ": worst difference " + worst);
            }
            assertEquals(inferences, stage.inferences());
            assertTrue(inferences >= 3, "several inferences, so the carried state matters: " + inferences);
            assertTrue(stage.modelIdentity().matches(java.util.regex.Pattern.quote(name) + "@[0-9a-f]{12}"), stage.modelIdentity());
        }
    }

    /** The fixture files of the test resources' learned folder (at least the tiny model's). */
    static List<String> fixtures() throws IOException, java.net.URISyntaxException {
        Path folder = Path.of(LearnedReconstructionTest.class.getResource(TestModels.FOLDER).toURI());
        List<String> names = new ArrayList<>();
        try (var files = java.nio.file.Files.list(folder)) {
            files.map(p -> p.getFileName().toString()).filter(s -> s.matches(".+\\.fixture.*\\.npz")).sorted().forEach(names::add);
        }
        assertTrue(names.contains("tiny-contract.fixture.npz"), "fixtures found: " + names);
        return names;
    }

    /** Runs a seeded stream through a fresh stage, reading out every 4 ms; returns every output's bits. */
    private int[] runOnce(Path model, int threads, int w, int h) {
        RandomEventStream s = RandomEventStream.builder(w, h, 21).activeUs(300_000).noiseHz(1).burstHz(60).edgeHz(20).build();
        try (LearnedReconstruction stage = LearnedReconstruction.open(model.toString(), 10_000, threads, w, h)) {
            EventBatch batch = s.newBatch();
            float[] out = new float[w * h];
            int frames = (int) ((s.t[s.size - 1] - s.t[0]) / 4_000);
            int[] bits = new int[frames * w * h];
            int b = 0;
            for (int k = 0; k < frames; k++) {
                long T = s.t[0] + (k + 1) * 4_000L;
                while (b < s.batches && s.batchTo(b) > 0 && s.t[s.batchTo(b) - 1] < T) {
                    s.fill(b++, batch);
                    stage.process(batch);
                }
                stage.readLog(T, out);
                for (int i = 0; i < out.length; i++) {
                    bits[k * w * h + i] = Float.floatToRawIntBits(out[i]);
                }
            }
            assertTrue(stage.inferences() > 20, "inferences " + stage.inferences());
            return bits;
        }
    }

    @Test
    void shouldGiveTheSameOutputBitForBitAcrossRuns() {
        Path model = TestModels.tiny(dir);
        int[] first = runOnce(model, 2, 346, 260);
        int[] second = runOnce(model, 2, 346, 260);
        assertArrayEquals(first, second, "same input and model, two threads: same bits");
        assertArrayEquals(runOnce(model, 1, 97, 61), runOnce(model, 1, 97, 61), "one thread: same bits");
        boolean anyNonZero = false;
        for (int v : first) {
            anyNonZero |= v != 0;
        }
        assertTrue(anyNonZero, "the outputs compared are not all zero");
    }

    @Test
    void shouldInferEachWindowOfSensorTimeOnceAndRepeatTheLastOutputBetween() {
        int w = 13;
        int h = 10;
        try (LearnedReconstruction stage = LearnedReconstruction.open(TestModels.tiny(dir).toString(), 10_000, 1, w, h)) {
            float[] out = new float[w * h];
            java.util.Arrays.fill(out, 7f);
            stage.readLog(5_000, out);
            assertArrayEquals(new float[w * h], out, 0f, "zeros before any event");
            assertEquals(0, stage.lastInferenceNanos());
            EventBatch b = new EventBatch(16);
            b.reset(100_000);
            b.add(3, 4, 100_000, 1); // the first window is [100_000, 110_000)
            b.add(4, 4, 100_500, -1);
            b.add(5, 4, 101_000, 1);
            stage.process(b);
            stage.readLog(109_999, out);
            assertEquals(0, stage.inferences(), "the window has not ended");
            assertArrayEquals(new float[w * h], out, 0f, "still zeros");
            stage.readLog(110_000, out);
            assertEquals(1, stage.inferences(), "T = t1: the window has ended");
            assertTrue(stage.lastInferenceNanos() > 0);
            float[] first = out.clone();
            assertFalse(java.util.Arrays.equals(new float[w * h], first), "an inference on events gives a non-zero image");
            b.reset(112_000);
            b.add(1, 1, 112_000, 1);
            stage.process(b);
            stage.readLog(119_000, out);
            assertEquals(0, stage.lastInferenceNanos());
            assertArrayEquals(first, out, 0f, "repeats the last output");
            b.reset(121_000);
            b.add(2, 2, 121_000, 1); // ends the window [110_000, 120_000) while events arrive
            stage.process(b);
            assertEquals(2, stage.inferences(), "inferred in process, before the next readout");
            stage.readLog(125_000, out);
            assertTrue(stage.lastInferenceNanos() > 0, "the inference run in process is reported at the next readout");
            assertNotEquals(first[w + 1], out[w + 1], "the second window's event shows");
        }
    }

    @Test
    void shouldGiveTheSameFramesWhateverTheReadoutTimes() {
        int w = 40;
        int h = 30;
        String model = TestModels.tiny(dir).toString();
        try (LearnedReconstruction everyWindow = LearnedReconstruction.open(model, 10_000, 1, w, h);
                LearnedReconstruction everyFourth = LearnedReconstruction.open(model, 10_000, 1, w, h)) {
            java.util.Random random = new java.util.Random(5);
            EventBatch b = new EventBatch(4096);
            EventBatch copy = new EventBatch(4096);
            float[] a = new float[w * h];
            float[] c = new float[w * h];
            long t = 3_000;
            for (int slice = 0; slice < 40; slice++) { // 7 ms slices: windows end inside batches
                b.reset(t);
                for (int i = 0; i < 300; i++) {
                    b.add(random.nextInt(w), random.nextInt(h), t + i * 7_000L / 300, random.nextBoolean() ? 1 : -1);
                }
                copy.copyFrom(b);
                everyWindow.process(b);
                everyFourth.process(copy);
                t += 7_000;
                everyWindow.readLog(t, a); // one stage read after every slice, the other only at the end
            }
            everyWindow.readLog(283_000, a);
            everyFourth.readLog(283_000, c);
            assertEquals(28, everyWindow.inferences(), "windows [10k ms, 10(k + 1) ms) ended by 283 ms");
            assertEquals(everyWindow.inferences(), everyFourth.inferences());
            assertArrayEquals(a, c, 0f, "same windows, same frames, bit for bit");
        }
    }

    @Test
    void shouldInferAFewQuietWindowsAndSkipTheRestOfAGap() {
        int w = 13;
        int h = 10;
        int q = LearnedReconstruction.MAX_QUIET_CATCH_UP;
        try (LearnedReconstruction stage = LearnedReconstruction.open(TestModels.tiny(dir).toString(), 10_000, 1, w, h)) {
            EventBatch b = new EventBatch(4);
            b.reset(0);
            b.add(2, 2, 0, 1);
            stage.process(b);
            float[] out = new float[w * h];
            for (long t = 10_000; t <= 40_000; t += 10_000) {
                stage.readLog(t, out); // a quiet scene read at every window's end: every window inferred
            }
            assertEquals(4, stage.inferences());
            assertEquals(0, stage.quietWindowsSkipped());
            stage.readLog(10_000_000, out); // ten seconds of silence read at once
            assertEquals(4 + q, stage.inferences(), "a catch-up infers a few quiet windows");
            assertEquals(1_000 - 4 - q, stage.quietWindowsSkipped(), "and skips the rest");
            b.reset(10_004_000);
            b.add(2, 2, 10_004_000, 1);
            stage.process(b);
            b.reset(10_100_000);
            b.add(3, 2, 10_100_000, 1); // ends the window holding the first event, then nine quiet ones
            stage.process(b);
            assertEquals(4 + q + 1 + q, stage.inferences(), "the grid goes on after the gap");
        }
    }

    @Test
    void shouldDropAWindowWhoseReadoutNobodyTook() {
        int w = 13;
        int h = 10;
        try (LearnedReconstruction stage = LearnedReconstruction.open(TestModels.tiny(dir).toString(), 10_000, 1, w, h)) {
            EventBatch b = new EventBatch(4);
            b.reset(0);
            b.add(2, 2, 0, 1);
            b.add(2, 3, 10, 1);
            stage.process(b);
            stage.readoutSkipped(5_000); // before t1: nothing to drop
            assertEquals(2, stage.grid().eventsAdded());
            stage.readoutSkipped(10_000);
            assertEquals(0, stage.grid().eventsAdded(), "window dropped at t1");
            assertEquals(1, stage.windowsDropped());
            float[] out = new float[w * h];
            stage.readLog(15_000, out); // the window [10_000, 20_000) has not ended: no inference
            assertEquals(0, stage.inferences());
            stage.readoutSkipped(40_000);
            assertEquals(4, stage.windowsDropped(), "three more windows ended unread");
            stage.readLog(50_000, out);
            assertEquals(1, stage.inferences(), "the grid stays aligned: [40_000, 50_000) ended");
        }
    }

    @Test
    void shouldNotAllocatePerEvent() {
        com.sun.management.ThreadMXBean threads = (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        if (!threads.isThreadAllocatedMemorySupported()) {
            return;
        }
        threads.setThreadAllocatedMemoryEnabled(true);
        RandomEventStream s = RandomEventStream.builder(64, 48, 4).activeUs(200_000).noiseHz(50).burstHz(100).build();
        try (LearnedReconstruction stage = LearnedReconstruction.open(TestModels.tiny(dir).toString(), 1_000_000_000L, 1, 64, 48)) {
            EventBatch batch = s.newBatch();
            for (int b = 0; b < s.batches; b++) {
                s.fill(b, batch);
                stage.process(batch);
            }
            long before = threads.getCurrentThreadAllocatedBytes();
            long events = 0;
            for (int b = 0; b < s.batches; b++) {
                s.fill(b, batch);
                stage.process(batch);
                events += batch.size;
            }
            long allocated = threads.getCurrentThreadAllocatedBytes() - before;
            assertTrue(events > 20_000, "events " + events);
            assertTrue(allocated < 16L * s.batches + 4096, "allocated " + allocated + " bytes over " + events + " events");
        }
    }

    @Test
    void shouldBuildFromTheChainSyntaxWithAQuotedPath() throws IOException {
        Path spaced = java.nio.file.Files.createDirectories(dir.resolve("my models, v1"));
        Path model = TestModels.tiny(spaced);
        String text = "refractory(period=100us) | learned-recon(model=\"" + model + "\", rate=100Hz, threads=1)";
        try (Chain chain = Chain.build(text, 40, 30)) {
            LearnedReconstruction stage = assertInstanceOf(LearnedReconstruction.class, chain.reconstruction());
            assertEquals(10_000, stage.periodUs(), "100 Hz: one inference per 10 ms");
            assertEquals("learned-recon", stage.name());
            assertEquals(model.toString(), chain.spec().stages().get(1).text("model"));
        }
    }
}
