package dev.afterglow.filters.learned;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.chain.ChainSpecException;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/** The contract's checks on declared tensors and metadata, without a model file. */
class ModelContractTest {
    private static final String LABEL = "model /m.onnx";

    private static Map<String, String> metadata() {
        Map<String, String> m = new HashMap<>();
        m.put("afterglow.contract", "1");
        m.put("afterglow.bins", "5");
        m.put("afterglow.state_channels", "16");
        m.put("afterglow.state_divisor", "4");
        m.put("afterglow.pad_multiple", "16");
        m.put("afterglow.model_name", "ember-2");
        return m;
    }

    private static ModelContract.Declared t(String name, long... shape) {
        return new ModelContract.Declared(name, "float32", shape);
    }

    private static List<ModelContract.Declared> inputs(long[] voxels) {
        return List.of(t("voxels", voxels), t("state", -1, 16, -1, -1));
    }

    private static final List<ModelContract.Declared> OUTPUTS = List.of(t("log_image", 1, 1, -1, -1), t("state_next", 1, 16, -1, -1));

    private static String refusal(Runnable r) {
        return assertThrows(ChainSpecException.class, r::run).getMessage();
    }

    @Test
    void shouldReadTheMetadataAndPadToTheMultiple() {
        ModelContract c = ModelContract.read(LABEL, metadata());
        assertEquals(new ModelContract(5, 16, 4, 16, "ember-2"), c);
        assertEquals(272, c.padded(260)); // 260 rounded up to a multiple of 16
        assertEquals(352, c.padded(346));
        assertEquals(480, c.padded(480));
        assertEquals(16, c.padded(1));
    }

    @Test
    void shouldAcceptASymbolicBatchAndFixedSizesThatMatchThePaddedSensor() {
        ModelContract c = ModelContract.read(LABEL, metadata());
        c.checkTensors(LABEL, inputs(new long[] {-1, 5, -1, -1}), OUTPUTS, 346, 260);
        c.checkTensors(LABEL, List.of(t("state", 1, 16, 68, 88), t("voxels", 1, 5, 272, 352)),
                List.of(t("state_next", 1, 16, 68, 88), t("log_image", 1, 1, 272, 352)), 346, 260);
    }

    @Test
    void shouldRefuseTensorsThatBreakTheContract() {
        ModelContract c = ModelContract.read(LABEL, metadata());
        String extra = refusal(() -> c.checkTensors(LABEL, List.of(t("voxels", 1, 5, -1, -1), t("state", 1, 16, -1, -1),
                t("frame", 1, 1, -1, -1)), OUTPUTS, 64, 48));
        assertTrue(extra.startsWith(LABEL + ": inputs are [voxels, state, frame]; expected exactly `voxels` and `state`"), extra);
        String rank = refusal(() -> c.checkTensors(LABEL, inputs(new long[] {5, -1, -1}), OUTPUTS, 64, 48));
        assertTrue(rank.contains("input `voxels` is [5, -1, -1]; expected [1, 5, H, W]"), rank);
        String channels = refusal(() -> c.checkTensors(LABEL, inputs(new long[] {1, -1, -1, -1}), OUTPUTS, 64, 48));
        assertTrue(channels.contains("input `voxels` is [1, -1, -1, -1]; expected [1, 5, H, W]"), channels);
        String batch = refusal(() -> c.checkTensors(LABEL, inputs(new long[] {2, 5, -1, -1}), OUTPUTS, 64, 48));
        assertTrue(batch.contains("is [2, 5, -1, -1]"), batch);
        String output = refusal(() -> c.checkTensors(LABEL, inputs(new long[] {1, 5, -1, -1}),
                List.of(t("log_image", 1, 3, -1, -1), t("state_next", 1, 16, -1, -1)), 64, 48));
        assertTrue(output.contains("output `log_image` is [1, 3, -1, -1]; expected [1, 1, H, W] (H x W = 48 x 64"), output);
        String half = refusal(() -> c.checkTensors(LABEL, inputs(new long[] {1, 5, -1, -1}),
                List.of(t("log_image", 1, 1, -1, -1), t("state_next", 1, 16, 6, 8)), 64, 48));
        assertTrue(half.contains("output `state_next` is [1, 16, 6, 8]; expected [1, 16, H/D, W/D]"), half);
    }

    @Test
    void shouldRefuseMetadataOutOfRangeOrMissing() {
        Map<String, String> m = metadata();
        m.put("afterglow.contract", "2");
        assertTrue(refusal(() -> ModelContract.read(LABEL, m)).contains("afterglow.contract=\"2\"; this node reads contract \"1\""));
        Map<String, String> one = metadata();
        one.put("afterglow.bins", "1");
        assertTrue(refusal(() -> ModelContract.read(LABEL, one)).contains("afterglow.bins=1 outside 2 .. 64"));
        Map<String, String> noDivisor = metadata();
        noDivisor.remove("afterglow.state_divisor");
        assertTrue(refusal(() -> ModelContract.read(LABEL, noDivisor)).contains("afterglow.state_divisor is missing"));
        Map<String, String> name = metadata();
        name.put("afterglow.model_name", "my model");
        assertTrue(refusal(() -> ModelContract.read(LABEL, name)).contains("afterglow.model_name=\"my model\"; expected 1 to 64 characters"));
    }
}
