package dev.afterglow.filters.learned;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpecException;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * A model that is missing, unreadable, not ONNX, or breaks the contract is refused when the chain
 * is built, with a message naming the file and the shapes expected. The broken models come from
 * {@code learned_test_models.py} (each breaks the contract in one place).
 */
class ModelRefusalTest {
    @TempDir
    Path dir;

    private ChainSpecException refused(Path model, int w, int h) {
        return assertThrows(ChainSpecException.class,
                () -> Chain.build("learned-recon(model=\"" + model + "\", threads=1)", w, h).close());
    }

    private static void assertMentions(ChainSpecException e, String... parts) {
        for (String part : parts) {
            assertTrue(e.getMessage().contains(part), "message lacks \"" + part + "\": " + e.getMessage());
        }
    }

    @Test
    void shouldRefuseAMissingFileNamingIt() {
        Path missing = dir.resolve("nowhere/model.onnx");
        assertMentions(refused(missing, 32, 24), "model " + missing, "no such file");
    }

    @Test
    void shouldRefuseADirectoryAndAnEmptyFile() throws IOException {
        assertMentions(refused(dir, 32, 24), "model " + dir, "not a regular file");
        Path empty = Files.createFile(dir.resolve("empty.onnx"));
        assertMentions(refused(empty, 32, 24), "model " + empty, "empty file");
    }

    @Test
    void shouldRefuseCorruptBytes() throws IOException {
        byte[] good = Files.readAllBytes(TestModels.tiny(dir));
        Path noise = dir.resolve("noise.onnx");
        byte[] random = new byte[4096];
        new SplittableRandom(3).nextBytes(random);
        Files.write(noise, random);
        assertMentions(refused(noise, 32, 24), "model " + noise, "not a model ONNX Runtime can load");
        Path truncated = dir.resolve("truncated.onnx");
        Files.write(truncated, Arrays.copyOf(good, good.length / 2));
        assertMentions(refused(truncated, 32, 24), "model " + truncated, "not a model ONNX Runtime can load");
        Path text = dir.resolve("text.onnx");
        Files.writeString(text, "this is a text file, not a model\n");
        assertMentions(refused(text, 32, 24), "model " + text);
    }

    @Test
    void shouldRefuseAWrongInputShapeWithTheExpectedShapes() {
        Path m = TestModels.copy("refused/bins-mismatch.onnx", dir);
        ChainSpecException e = refused(m, 346, 260);
        // the issue's example of a good message
        assertMentions(e, "model " + m + ": input `voxels` is [1, 3, -1, -1]; expected [1, 5, H, W] (B=5 from afterglow.bins",
                "H x W = 264 x 352", "346x260 sensor", "P=8");
    }

    @ParameterizedTest
    @CsvSource(delimiter = ';', value = {
        "refused/state-channels-mismatch.onnx; input `state` is [1, 3, -1, -1]; expected [1, 4, H/D, W/D] (S=4 from afterglow.state_channels, D=4",
        "refused/wrong-output-name.onnx; outputs are [image, state_next]; expected exactly `log_image` and `state_next`",
        "refused/no-contract.onnx; metadata afterglow.contract is missing; expected \"1\"",
        "refused/bins-not-a-number.onnx; metadata afterglow.bins=\"five\" is not a whole number",
        "refused/pad-not-multiple.onnx; metadata afterglow.pad_multiple=6 is not a multiple of afterglow.state_divisor=4",
        "refused/voxels-double.onnx; input `voxels` is float64; expected float32 [1, 5, H, W]",
        "refused/fixed-size.onnx; input `voxels` is [1, 5, 32, 32]; expected [1, 5, H, W]",
        "refused/half-size-output.onnx; dry inference at 48x40: output `log_image` is [1, 1, 20, 24]; expected [1, 1, 40, 48]"})
    void shouldRefuseAModelThatBreaksTheContract(String resource, String expected) {
        Path m = TestModels.copy(resource, dir);
        ChainSpecException e = refused(m, 45, 37); // padded to 48 x 40
        assertMentions(e, "model " + m + ": ", expected);
    }

    @Test
    void shouldAcceptAFixedSpatialSizeThatEqualsThePaddedSensor() {
        // fixed-size.onnx is fixed at 32 x 32: right for a sensor that pads to 32 x 32
        Path m = TestModels.copy("refused/fixed-size.onnx", dir);
        try (LearnedReconstruction stage = LearnedReconstruction.open(m.toString(), 50_000, 1, 30, 25)) {
            assertEquals(5, stage.contract().bins());
        }
    }

    @Test
    void shouldRefuseAMissingBuiltinClearlyOrLoadTheShippedModel() {
        boolean shipped = LearnedReconstruction.class.getResource(LearnedReconstruction.BUILTIN_RESOURCE) != null;
        if (shipped) {
            // Once the trained model is in the jar: it must follow the contract at common sensor sizes.
            for (int[] size : new int[][] {{346, 260}, {640, 480}, {13, 7}}) {
                try (Chain c = Chain.build("learned-recon", size[0], size[1])) {
                    LearnedReconstruction stage = (LearnedReconstruction) c.reconstruction();
                    assertTrue(stage.modelIdentity().startsWith(stage.contract().modelName() + "@"));
                }
            }
        } else {
            ChainSpecException e = assertThrows(ChainSpecException.class, () -> Chain.build("learned-recon", 32, 24));
            assertMentions(e, "learned-recon.model=builtin", LearnedReconstruction.BUILTIN_RESOURCE, "not in this build",
                    "learned-recon(model=");
        }
    }
}
