package dev.afterglow.filters.learned;

import ai.onnxruntime.NodeInfo;
import ai.onnxruntime.OnnxTensor;
import ai.onnxruntime.OnnxValue;
import ai.onnxruntime.OrtEnvironment;
import ai.onnxruntime.OrtException;
import ai.onnxruntime.OrtLoggingLevel;
import ai.onnxruntime.OrtSession;
import ai.onnxruntime.TensorInfo;
import dev.afterglow.filters.chain.ChainSpecException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.FloatBuffer;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * One loaded model, checked against the {@link ModelContract} for one sensor size, with its input
 * and output tensors allocated once and reused by every inference.
 *
 * <p>Buffers: the voxel grid, the two state tensors and the log image live in direct float buffers
 * (native order) wrapped by {@link OnnxTensor}s once. Outputs are "pinned": ONNX Runtime writes
 * {@code log_image} and {@code state_next} straight into our buffers, so an inference allocates
 * only ONNX Runtime's small result object. The state ping-pongs: {@code state_next} of one run is
 * the {@code state} input of the next, without a copy.
 *
 * <p>Determinism: a fixed intra-op thread count, one inter-op thread, sequential execution and
 * ONNX Runtime's deterministic-compute option; with those, the same inputs and model give the same
 * output bit for bit from run to run (checked by the tests). Results may differ in the last bits
 * between different thread counts (the work is split differently). Idle intra-op threads do not
 * spin-wait (spinning would burn a shared core between inferences).
 *
 * <p>Threading: one owner thread runs {@link #run}; {@link #close} on that thread or after it.
 */
final class ModelSession implements AutoCloseable {
    private final ModelContract contract;
    private final OrtSession session;
    private final int paddedWidth;
    private final int paddedHeight;
    private final FloatBuffer voxels;
    private final FloatBuffer logImage;
    private final FloatBuffer[] states = new FloatBuffer[2];
    private final List<OnnxTensor> tensors = new ArrayList<>();
    private final Map<String, OnnxTensor>[] inputs;
    private final Map<String, OnnxValue>[] outputs;
    /** Which state buffer is the input of the next run (0 or 1). */
    private int current;
    private boolean closed;

    /**
     * Opens {@code model} bytes for a {@code width} x {@code height} sensor, checks the contract and
     * runs one dry inference on zeros to check the output shapes.
     *
     * @param label how messages name the model
     * @throws ChainSpecException if ONNX Runtime cannot load it or it breaks the contract
     */
    @SuppressWarnings("unchecked")
    ModelSession(String label, byte[] model, int threads, int width, int height) {
        OrtEnvironment env = environment();
        OrtSession s;
        try (OrtSession.SessionOptions options = options(threads)) {
            s = env.createSession(model, options);
        } catch (OrtException e) {
            throw new ChainSpecException(label + ": not a model ONNX Runtime can load (" + oneLine(e) + ")");
        }
        this.session = s;
        try {
            this.contract = ModelContract.read(label, session.getMetadata().getCustomMetadata());
            contract.checkTensors(label, declared(session.getInputInfo()), declared(session.getOutputInfo()), width, height);
            this.paddedWidth = contract.padded(width);
            this.paddedHeight = contract.padded(height);
            int stateH = paddedHeight / contract.stateDivisor();
            int stateW = paddedWidth / contract.stateDivisor();
            long[] voxelShape = {1, contract.bins(), paddedHeight, paddedWidth};
            long[] stateShape = {1, contract.stateChannels(), stateH, stateW};
            long[] logShape = {1, 1, paddedHeight, paddedWidth};
            dryRun(label, env, voxelShape, stateShape, logShape);
            this.voxels = floats(voxelShape);
            this.logImage = floats(logShape);
            this.states[0] = floats(stateShape);
            this.states[1] = floats(stateShape);
            OnnxTensor voxelTensor = tensor(env, voxels, voxelShape);
            OnnxTensor logTensor = tensor(env, logImage, logShape);
            OnnxTensor[] stateTensors = {tensor(env, states[0], stateShape), tensor(env, states[1], stateShape)};
            this.inputs = new Map[2];
            this.outputs = new Map[2];
            for (int k = 0; k < 2; k++) {
                inputs[k] = Map.of(ModelContract.VOXELS, voxelTensor, ModelContract.STATE, stateTensors[k]);
                outputs[k] = Map.of(ModelContract.LOG_IMAGE, logTensor, ModelContract.STATE_NEXT, stateTensors[1 - k]);
            }
        } catch (OrtException e) {
            close();
            throw new ChainSpecException(label + ": ONNX Runtime refused it (" + oneLine(e) + ")");
        } catch (RuntimeException e) {
            close();
            throw e;
        }
    }

    private static OrtEnvironment environment() {
        try {
            return OrtEnvironment.getEnvironment(OrtLoggingLevel.ORT_LOGGING_LEVEL_ERROR, "afterglow");
        } catch (RuntimeException | LinkageError e) {
            throw new ChainSpecException("learned-recon: ONNX Runtime cannot start on this machine (" + e + ")");
        }
    }

    /** Session options that make runs repeatable and keep idle threads off the CPU. */
    static OrtSession.SessionOptions options(int threads) throws OrtException {
        OrtSession.SessionOptions o = new OrtSession.SessionOptions();
        try {
            o.setIntraOpNumThreads(threads);
            o.setInterOpNumThreads(1);
            o.setExecutionMode(OrtSession.SessionOptions.ExecutionMode.SEQUENTIAL);
            o.setOptimizationLevel(OrtSession.SessionOptions.OptLevel.ALL_OPT);
            o.setDeterministicCompute(true);
            o.addConfigEntry("session.intra_op.allow_spinning", "0");
            o.addConfigEntry("session.inter_op.allow_spinning", "0");
            o.setSessionLogLevel(OrtLoggingLevel.ORT_LOGGING_LEVEL_ERROR);
            return o;
        } catch (OrtException | RuntimeException e) {
            o.close();
            throw e;
        }
    }

    /** Runs the model once on zeros at the padded size: the outputs must come back with the contract's shapes. */
    private void dryRun(String label, OrtEnvironment env, long[] voxelShape, long[] stateShape, long[] logShape) throws OrtException {
        try (OnnxTensor v = OnnxTensor.createTensor(env, floats(voxelShape), voxelShape);
                OnnxTensor st = OnnxTensor.createTensor(env, floats(stateShape), stateShape);
                OrtSession.Result r = session.run(Map.of(ModelContract.VOXELS, v, ModelContract.STATE, st))) {
            String at = label + ": dry inference at " + voxelShape[3] + "x" + voxelShape[2] + ": output `";
            checkOutput(at, r, ModelContract.LOG_IMAGE, logShape);
            checkOutput(at, r, ModelContract.STATE_NEXT, stateShape);
        } catch (OrtException e) {
            throw new ChainSpecException(label + ": dry inference on zeros at the padded size " + java.util.Arrays.toString(voxelShape)
                    + " failed (" + oneLine(e) + ")");
        }
    }

    private static void checkOutput(String at, OrtSession.Result r, String name, long[] expected) {
        OnnxValue value = r.get(name).orElseThrow(() -> new ChainSpecException(at + name + "` is missing"));
        if (!(value instanceof OnnxTensor t) || t.getInfo().type != ai.onnxruntime.OnnxJavaType.FLOAT) {
            throw new ChainSpecException(at + name + "` is not a float32 tensor");
        }
        TensorInfo info = t.getInfo();
        if (!java.util.Arrays.equals(info.getShape(), expected)) {
            throw new ChainSpecException(at + name + "` is " + java.util.Arrays.toString(info.getShape()) + "; expected "
                    + java.util.Arrays.toString(expected));
        }
        FloatBuffer data = t.getFloatBuffer();
        for (int i = 0; i < data.limit(); i++) {
            if (!Float.isFinite(data.get(i))) {
                throw new ChainSpecException(at + name + "` holds " + data.get(i) + " at index " + i + " for all-zero inputs");
            }
        }
    }

    private static List<ModelContract.Declared> declared(Map<String, NodeInfo> infos) {
        List<ModelContract.Declared> list = new ArrayList<>();
        for (NodeInfo n : infos.values()) {
            if (n.getInfo() instanceof TensorInfo t) {
                list.add(new ModelContract.Declared(n.getName(), typeName(t), t.getShape()));
            } else {
                list.add(new ModelContract.Declared(n.getName(), "not a tensor", new long[0]));
            }
        }
        return list;
    }

    private static String typeName(TensorInfo t) {
        return switch (t.onnxType) {
            case ONNX_TENSOR_ELEMENT_DATA_TYPE_FLOAT -> "float32";
            case ONNX_TENSOR_ELEMENT_DATA_TYPE_DOUBLE -> "float64";
            case ONNX_TENSOR_ELEMENT_DATA_TYPE_FLOAT16 -> "float16";
            default -> t.onnxType.name().replace("ONNX_TENSOR_ELEMENT_DATA_TYPE_", "").toLowerCase(java.util.Locale.ROOT);
        };
    }

    private static FloatBuffer floats(long[] shape) {
        long n = 1;
        for (long d : shape) {
            n *= d;
        }
        if (n * Float.BYTES > Integer.MAX_VALUE) {
            throw new ChainSpecException("learned-recon: a tensor of shape " + java.util.Arrays.toString(shape) + " exceeds 2 GB");
        }
        return ByteBuffer.allocateDirect((int) n * Float.BYTES).order(ByteOrder.nativeOrder()).asFloatBuffer();
    }

    private OnnxTensor tensor(OrtEnvironment env, FloatBuffer buffer, long[] shape) throws OrtException {
        OnnxTensor t = OnnxTensor.createTensor(env, buffer, shape);
        tensors.add(t);
        return t;
    }

    /**
     * Runs one inference on the voxel grid in {@link #voxels()} and the current state; the log
     * image is then in {@link #logImage()} and the new state becomes the current one.
     *
     * @throws IllegalStateException if ONNX Runtime fails (the caller's error handling resets the sensor)
     */
    void run() {
        int k = current;
        try (OrtSession.Result ignored = session.run(inputs[k], outputs[k])) {
            current = 1 - k;
        } catch (OrtException e) {
            throw new IllegalStateException("learned-recon: inference failed (" + oneLine(e) + ")", e);
        }
    }

    /** The voxel-grid input, [1, B, Hp, Wp], written before {@link #run}. */
    FloatBuffer voxels() {
        return voxels;
    }

    /** The last log image, [1, 1, Hp, Wp]. */
    FloatBuffer logImage() {
        return logImage;
    }

    /** The state the next run starts from, [1, S, Hp/D, Wp/D]. */
    FloatBuffer state() {
        return states[current];
    }

    ModelContract contract() {
        return contract;
    }

    int paddedWidth() {
        return paddedWidth;
    }

    int paddedHeight() {
        return paddedHeight;
    }

    /** Releases the tensors and the session. Idempotent. */
    @Override
    public void close() {
        if (closed) {
            return;
        }
        closed = true;
        for (OnnxTensor t : tensors) {
            t.close();
        }
        tensors.clear();
        try {
            session.close();
        } catch (OrtException e) {
            throw new IllegalStateException("learned-recon: closing the session failed (" + oneLine(e) + ")", e);
        }
    }

    private static String oneLine(Exception e) {
        String m = e.getMessage() == null ? e.toString() : e.getMessage();
        return m.replaceAll("\\s+", " ").strip();
    }
}
