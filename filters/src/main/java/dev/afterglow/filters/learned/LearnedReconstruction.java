package dev.afterglow.filters.learned;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.StageCounters;
import dev.afterglow.filters.chain.ChainSpecException;
import dev.afterglow.filters.recon.InferringReconstruction;
import java.nio.FloatBuffer;
import java.util.Arrays;

/**
 * Learned recurrent reconstruction (H. Rebecq, R. Ranftl, V. Koltun and D. Scaramuzza, "High
 * speed and high dynamic range video with an event camera", IEEE TPAMI 2019; a much smaller network
 * does it too: C. Scheerlinck et al., "Fast image reconstruction with an event camera", WACV 2020):
 * the events between two inferences are binned into a {@link VoxelGrid}, normalised, and fed with
 * the previous hidden state to a recurrent convolutional network, here any ONNX model that follows
 * the {@link ModelContract}, run on the CPU by ONNX Runtime.
 *
 * <p>Windows and readouts: the first window starts at the first event's time t0 and ends at
 * t1 = t0 + period (period = 1 / inference rate). {@link #process} bins events into the current
 * window; an event at or after t1 that comes before the next readout lands in the last bin.
 * {@link #readLog}{@code (T)} runs one inference when T &ge; t1, or when there is no output yet
 * and the window holds events; the state is carried to the next inference, the next window starts
 * at t0 = T, and the log image (cropped from the padded size) is the output. Any other readout
 * repeats the last output (zeros before the first inference). A frame time nobody reads
 * ({@link #readoutSkipped}) at or after t1 drops the window and starts the next at that time.
 *
 * <p>Costs: per event, the voxel grid's binning (no allocation); per inference, the grid's
 * normalisation, the model, and ONNX Runtime's small result object (the tensors are allocated
 * once, see {@link ModelSession}); per repeated readout, one array copy.
 *
 * <p>Threading: single owner thread for everything; {@link #close} releases the native session.
 */
public final class LearnedReconstruction implements InferringReconstruction, AutoCloseable {
    /** The {@code model} value that selects the model shipped with the node. */
    public static final String BUILTIN = ModelFile.BUILTIN;
    /** Class-path resource of the shipped model. */
    public static final String BUILTIN_RESOURCE = ModelFile.BUILTIN_RESOURCE;

    private final int width;
    private final int height;
    private final long periodUs;
    private final int threads;
    private final String modelText;
    private final String identity;
    private final ModelSession session;
    private final VoxelGrid grid;
    private final float[] last;
    private final StageCounters counters = new StageCounters();
    private boolean windowOpen;
    private boolean haveOutput;
    private long t0Us;
    private long t1Us;
    private long lastInferenceNanos;
    private long inferences;
    private long windowsDropped;

    private LearnedReconstruction(String modelText, ModelFile file, ModelSession session, long periodUs, int threads,
            int width, int height) {
        this.modelText = modelText;
        this.session = session;
        this.periodUs = periodUs;
        this.threads = threads;
        this.width = width;
        this.height = height;
        this.identity = session.contract().modelName() + "@" + file.sha256Hex().substring(0, 12);
        this.grid = new VoxelGrid(session.contract().bins(), width, height);
        this.last = new float[width * height];
    }

    /**
     * Loads and checks a model for a sensor of {@code width} x {@code height} pixels.
     *
     * @param model a file path, or {@value #BUILTIN}
     * @param periodUs time between inferences in microseconds of sensor time, at least 1
     * @param threads ONNX Runtime intra-op threads, 1 .. 64
     * @throws ChainSpecException if the model is missing, unreadable, not ONNX, or breaks the contract;
     *     the message names the file and the expected shapes
     */
    public static LearnedReconstruction open(String model, long periodUs, int threads, int width, int height) {
        if (periodUs < 1) {
            throw new ChainSpecException("learned-recon: period " + periodUs + "us < 1us");
        }
        if (threads < 1 || threads > 64) {
            throw new ChainSpecException("learned-recon.threads=" + threads + " outside 1 .. 64");
        }
        ModelFile file = ModelFile.read(model);
        ModelSession session = new ModelSession(file.label(), file.bytes(), threads, width, height);
        try {
            return new LearnedReconstruction(model, file, session, periodUs, threads, width, height);
        } catch (RuntimeException e) {
            session.close();
            throw e;
        }
    }

    @Override
    public String name() {
        return "learned-recon";
    }

    @Override
    public void process(EventBatch batch) {
        int n = batch.size;
        if (n == 0) {
            return;
        }
        if (!windowOpen) {
            // The first window starts at the first event, not the batch base, so results do not depend on batching.
            t0Us = batch.minTimeUs();
            t1Us = t0Us + periodUs;
            windowOpen = true;
        }
        grid.add(batch, t0Us, t1Us);
        counters.record(n, n);
    }

    @Override
    public void readLog(long timeUs, float[] out) {
        lastInferenceNanos = 0;
        if (windowOpen && (timeUs >= t1Us || (!haveOutput && grid.eventsAdded() > 0))) {
            infer();
            t0Us = timeUs;
            t1Us = timeUs + periodUs;
        }
        System.arraycopy(last, 0, out, 0, last.length);
    }

    private void infer() {
        long start = System.nanoTime();
        int wp = session.paddedWidth();
        grid.normaliseInto(session.voxels(), wp, session.paddedHeight());
        session.run();
        FloatBuffer image = session.logImage();
        for (int y = 0; y < height; y++) {
            image.get(y * wp, last, y * width, width);
        }
        haveOutput = true;
        inferences++;
        lastInferenceNanos = Math.max(1, System.nanoTime() - start);
    }

    @Override
    public void readoutSkipped(long timeUs) {
        if (windowOpen && timeUs >= t1Us) {
            grid.clear();
            t0Us = timeUs;
            t1Us = timeUs + periodUs;
            windowsDropped++;
        }
    }

    @Override
    public String modelIdentity() {
        return identity;
    }

    @Override
    public long lastInferenceNanos() {
        return lastInferenceNanos;
    }

    @Override
    public long inferences() {
        return inferences;
    }

    /** Windows dropped at frame times nobody read. */
    public long windowsDropped() {
        return windowsDropped;
    }

    /** The model's contract values (B, S, D, P, name). */
    public ModelContract contract() {
        return session.contract();
    }

    /** Time between inferences, microseconds of sensor time. */
    public long periodUs() {
        return periodUs;
    }

    /** A copy of the recurrent state the next inference starts from, [S][Hp/D][Wp/D] (tests, diagnostics). */
    public float[] stateCopy() {
        FloatBuffer s = session.state();
        float[] copy = new float[s.capacity()];
        s.get(0, copy);
        return copy;
    }

    @Override
    public int width() {
        return width;
    }

    @Override
    public int height() {
        return height;
    }

    /** No contrast threshold: the model's output is log intensity up to an affine map. Returns 0. */
    @Override
    public double contrast() {
        return 0;
    }

    @Override
    public StageCounters counters() {
        return counters;
    }

    @Override
    public String describe() {
        return "learned-recon(model=" + modelText + ", rate=" + (1e6 / periodUs) + "Hz, threads=" + threads + ")";
    }

    /** Releases the native session and tensors. Idempotent. */
    @Override
    public void close() {
        session.close();
    }

    /** For the tests: the grid being filled. */
    VoxelGrid grid() {
        return grid;
    }

    /** For the tests: the last output, width*height. */
    float[] lastOutput() {
        return Arrays.copyOf(last, last.length);
    }
}
