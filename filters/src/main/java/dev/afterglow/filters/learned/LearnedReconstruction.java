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
 * <p>Windows on the sensor's clock: window k covers [k P, (k + 1) P) of sensor time, P = 1 /
 * inference rate, whatever the readouts do, so the model sees the windows it was trained on; the
 * first is the one holding the first event. A window is inferred once, when it has
 * ended: when an event at or after its end arrives ({@link #process} splits the batch there), or
 * at a readout {@link #readLog}{@code (T)} with T at or after its end, whichever comes first. The
 * state is carried from one window to the next. A window without events is inferred too (the
 * model sees a quiet scene), but one catch-up (one event or readout that ends several windows at
 * once: a silent sensor, shed packets, a jump in its clock) infers at most
 * {@value #MAX_QUIET_CATCH_UP} quiet windows and skips the rest, so a gap costs no more than a few
 * inferences. A readout returns the output of the last window inferred
 * (zeros before the first). A frame time nobody reads ({@link #readoutSkipped}) drops, without
 * inference, the windows that ended by then: with nobody watching, the model costs nothing.
 *
 * <p>Costs: per event, one time comparison and the voxel grid's binning (no allocation); per inference, the grid's
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
    /** Quiet (event-free) windows one catch-up still infers; later ones are skipped. */
    public static final int MAX_QUIET_CATCH_UP = 2;

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
    private long t0Us;
    private long t1Us;
    private long inferenceNanosSinceReadout;
    private long lastInferenceNanos;
    private long inferences;
    private long windowsDropped;
    private long quietWindowsSkipped;

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
            // Windows sit on multiples of the period from sensor time 0, as the node's frame times do, so a
            // window ends at a frame time when the frame rate is a multiple of the rate: no staleness.
            t0Us = Math.floorDiv(batch.minTimeUs(), periodUs) * periodUs;
            t1Us = t0Us + periodUs;
            windowOpen = true;
        }
        int[] ts = batch.t;
        long base = batch.timeBaseUs;
        int from = 0;
        for (int i = 0; i < n; i++) {
            long t = base + ts[i];
            if (t >= t1Us) {
                grid.add(batch, from, i, t0Us, t1Us);
                inferWindowsEndingBy(t);
                from = i;
            }
        }
        grid.add(batch, from, n, t0Us, t1Us);
        counters.record(n, n);
    }

    @Override
    public void readLog(long timeUs, float[] out) {
        if (windowOpen) {
            inferWindowsEndingBy(timeUs);
        }
        lastInferenceNanos = inferenceNanosSinceReadout;
        inferenceNanosSinceReadout = 0;
        System.arraycopy(last, 0, out, 0, last.length);
    }

    /** Infers the windows that end at or before {@code timeUs}, in order, and opens the one holding it. */
    private void inferWindowsEndingBy(long timeUs) {
        int quiet = 0;
        while (t1Us <= timeUs) {
            if (grid.eventsAdded() > 0) {
                infer();
            } else if (quiet < MAX_QUIET_CATCH_UP) {
                quiet++;
                infer();
            } else {
                // A gap: move straight to the window holding timeUs.
                long skipped = (timeUs - t0Us) / periodUs;
                quietWindowsSkipped += skipped;
                t0Us += skipped * periodUs;
                t1Us = t0Us + periodUs;
                continue;
            }
            t0Us = t1Us;
            t1Us = t0Us + periodUs;
        }
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
        inferences++;
        inferenceNanosSinceReadout += Math.max(1, System.nanoTime() - start);
    }

    @Override
    public void readoutSkipped(long timeUs) {
        if (windowOpen && timeUs >= t1Us) {
            long ended = (timeUs - t0Us) / periodUs;
            grid.clear();
            t0Us += ended * periodUs;
            t1Us = t0Us + periodUs;
            windowsDropped += ended;
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

    /** Quiet windows skipped, beyond {@value #MAX_QUIET_CATCH_UP} in one catch-up. */
    public long quietWindowsSkipped() {
        return quietWindowsSkipped;
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
