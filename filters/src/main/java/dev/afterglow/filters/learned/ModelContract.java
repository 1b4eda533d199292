package dev.afterglow.filters.learned;

import dev.afterglow.filters.chain.ChainSpecException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.regex.Pattern;

/**
 * The contract between the node and a learned reconstruction model (contract version 1), read
 * from the model's metadata and checked against its declared inputs and outputs:
 *
 * <pre>
 * input  voxels      float32 [1, B, Hp, Wp]        normalised voxel grid ({@link VoxelGrid})
 * input  state       float32 [1, S, Hp/D, Wp/D]    recurrent state, zeros at start
 * output log_image   float32 [1, 1, Hp, Wp]        log intensity up to an affine map
 * output state_next  float32 [1, S, Hp/D, Wp/D]    the state for the next inference
 * </pre>
 *
 * Hp and Wp are the sensor's height and width rounded up to a multiple of P. Metadata
 * ({@code metadata_props}): {@code afterglow.contract} = "1", {@code afterglow.bins} = B,
 * {@code afterglow.state_channels} = S, {@code afterglow.state_divisor} = D,
 * {@code afterglow.pad_multiple} = P (a multiple of D), {@code afterglow.model_name}. Spatial
 * dimensions should be symbolic in the file; a fixed one must equal this sensor's padded size. The
 * batch dimension is 1 or symbolic. Every refusal is a {@link ChainSpecException} whose message
 * names the model and the expected shapes.
 *
 * @param bins B, time bins of the voxel grid
 * @param stateChannels S
 * @param stateDivisor D, the state's spatial downscale
 * @param padMultiple P, what the input's height and width are padded to a multiple of
 * @param modelName the model's own name, e.g. {@code ember-2}
 */
public record ModelContract(int bins, int stateChannels, int stateDivisor, int padMultiple, String modelName) {
    /** The contract version this node reads. */
    public static final String VERSION = "1";
    /** Metadata keys. */
    public static final String KEY_CONTRACT = "afterglow.contract";
    public static final String KEY_BINS = "afterglow.bins";
    public static final String KEY_STATE_CHANNELS = "afterglow.state_channels";
    public static final String KEY_STATE_DIVISOR = "afterglow.state_divisor";
    public static final String KEY_PAD_MULTIPLE = "afterglow.pad_multiple";
    public static final String KEY_MODEL_NAME = "afterglow.model_name";
    /** Tensor names. */
    public static final String VOXELS = "voxels";
    public static final String STATE = "state";
    public static final String LOG_IMAGE = "log_image";
    public static final String STATE_NEXT = "state_next";

    private static final Pattern NAME = Pattern.compile("[A-Za-z0-9._-]{1,64}");

    /** A tensor as the model declares it: name, element type (e.g. {@code float32}) and shape, -1 for a symbolic dimension. */
    public record Declared(String name, String type, long[] shape) {
        @Override
        public String toString() {
            return "`" + name + "` " + type + " " + Arrays.toString(shape);
        }
    }

    /**
     * Reads the contract from a model's metadata.
     *
     * @param label how messages name the model, e.g. {@code model /opt/m.onnx}
     * @throws ChainSpecException if a key is missing or out of range
     */
    public static ModelContract read(String label, Map<String, String> metadata) {
        String version = metadata.get(KEY_CONTRACT);
        if (version == null) {
            throw new ChainSpecException(label + ": metadata " + KEY_CONTRACT + " is missing; expected \"" + VERSION
                    + "\" (a model exported for the learned-recon model contract, see DEVELOPERS.md)");
        }
        if (!VERSION.equals(version.strip())) {
            throw new ChainSpecException(label + ": metadata " + KEY_CONTRACT + "=\"" + version + "\"; this node reads contract \""
                    + VERSION + "\"");
        }
        int b = whole(label, metadata, KEY_BINS, 2, 64);
        int s = whole(label, metadata, KEY_STATE_CHANNELS, 1, 4096);
        int d = whole(label, metadata, KEY_STATE_DIVISOR, 1, 256);
        int p = whole(label, metadata, KEY_PAD_MULTIPLE, 1, 1024);
        if (p % d != 0) {
            throw new ChainSpecException(label + ": metadata " + KEY_PAD_MULTIPLE + "=" + p + " is not a multiple of "
                    + KEY_STATE_DIVISOR + "=" + d);
        }
        String name = metadata.get(KEY_MODEL_NAME);
        if (name == null || !NAME.matcher(name).matches()) {
            throw new ChainSpecException(label + ": metadata " + KEY_MODEL_NAME + (name == null ? " is missing" : "=\"" + name + "\"")
                    + "; expected 1 to 64 characters of A-Z a-z 0-9 . _ -");
        }
        return new ModelContract(b, s, d, p, name);
    }

    private static int whole(String label, Map<String, String> metadata, String key, int min, int max) {
        String text = metadata.get(key);
        if (text == null) {
            throw new ChainSpecException(label + ": metadata " + key + " is missing; expected a whole number in " + min + " .. " + max);
        }
        int v;
        try {
            v = Integer.parseInt(text.strip());
        } catch (NumberFormatException e) {
            throw new ChainSpecException(label + ": metadata " + key + "=\"" + text + "\" is not a whole number in " + min + " .. " + max);
        }
        if (v < min || v > max) {
            throw new ChainSpecException(label + ": metadata " + key + "=" + v + " outside " + min + " .. " + max);
        }
        return v;
    }

    /** {@code n} rounded up to a multiple of P. */
    public int padded(int n) {
        return (n + padMultiple - 1) / padMultiple * padMultiple;
    }

    /**
     * Checks the declared inputs and outputs against the contract for a sensor of
     * {@code width} x {@code height}.
     *
     * @throws ChainSpecException naming the first tensor that does not match and the shape expected
     */
    public void checkTensors(String label, List<Declared> inputs, List<Declared> outputs, int width, int height) {
        checkNames(label, "inputs", inputs, VOXELS, STATE);
        checkNames(label, "outputs", outputs, LOG_IMAGE, STATE_NEXT);
        int hp = padded(height);
        int wp = padded(width);
        String size = "; H x W = " + hp + " x " + wp + ", the " + width + "x" + height + " sensor padded to a multiple of P="
                + padMultiple + " (" + KEY_PAD_MULTIPLE + ")";
        String stateWhy = " (S=" + stateChannels + " from " + KEY_STATE_CHANNELS + ", D=" + stateDivisor + " from "
                + KEY_STATE_DIVISOR + size + ")";
        check(label, "input", find(inputs, VOXELS), bins, hp, wp, "[1, " + bins + ", H, W]",
                " (B=" + bins + " from " + KEY_BINS + size + ")");
        check(label, "input", find(inputs, STATE), stateChannels, hp / stateDivisor, wp / stateDivisor,
                "[1, " + stateChannels + ", H/D, W/D]", stateWhy);
        check(label, "output", find(outputs, LOG_IMAGE), 1, hp, wp, "[1, 1, H, W]", " (" + size.substring(2) + ")");
        check(label, "output", find(outputs, STATE_NEXT), stateChannels, hp / stateDivisor, wp / stateDivisor,
                "[1, " + stateChannels + ", H/D, W/D]", stateWhy);
    }

    private static void checkNames(String label, String what, List<Declared> declared, String first, String second) {
        List<String> names = new ArrayList<>();
        declared.forEach(d -> names.add(d.name()));
        if (names.size() != 2 || !names.contains(first) || !names.contains(second)) {
            throw new ChainSpecException(label + ": " + what + " are " + names + "; expected exactly `" + first + "` and `" + second + "`");
        }
    }

    private static Declared find(List<Declared> list, String name) {
        for (Declared d : list) {
            if (d.name().equals(name)) {
                return d;
            }
        }
        throw new IllegalStateException(name); // checkNames ran first
    }

    private static void check(String label, String role, Declared d, int channels, int h, int w, String expected, String why) {
        if (!"float32".equals(d.type())) {
            throw new ChainSpecException(label + ": " + role + " `" + d.name() + "` is " + d.type() + "; expected float32 "
                    + expected + why);
        }
        long[] s = d.shape();
        boolean ok = s.length == 4
                && (s[0] == 1 || s[0] == -1)
                && s[1] == channels
                && (s[2] == -1 || s[2] == h)
                && (s[3] == -1 || s[3] == w);
        if (!ok) {
            throw new ChainSpecException(label + ": " + role + " `" + d.name() + "` is " + Arrays.toString(s) + "; expected "
                    + expected + why);
        }
    }
}
