package dev.afterglow.filters.learned;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;

/**
 * The test models of {@code filters/src/test/python/learned_test_models.py}, copied from the class
 * path to a file (a chain names its model by path). Shipped in the filters test jar so the node's
 * tests can use them too.
 */
public final class TestModels {
    /** Class-path folder of the test models. */
    public static final String FOLDER = "/dev/afterglow/filters/learned/";
    /** The model that follows the contract: B=5, S=4, D=4, P=8, named {@code tiny-contract}. */
    public static final String TINY = "tiny-contract.onnx";

    private TestModels() {
    }

    /** Copies the test model {@code resource} (relative to {@link #FOLDER}) into {@code dir}; returns its path. */
    public static Path copy(String resource, Path dir) {
        try (InputStream in = TestModels.class.getResourceAsStream(FOLDER + resource)) {
            if (in == null) {
                throw new IllegalStateException("test model " + FOLDER + resource + " is not on the class path");
            }
            Path file = dir.resolve(resource.replace('/', '_'));
            Files.copy(in, file, StandardCopyOption.REPLACE_EXISTING);
            return file;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** The contract-following test model copied into {@code dir}. */
    public static Path tiny(Path dir) {
        return copy(TINY, dir);
    }
}
