package dev.afterglow.filters.learned;

import dev.afterglow.filters.chain.ChainSpecException;
import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;

/**
 * A model's bytes, where they came from (a file, or the model shipped in the jar) and their
 * SHA-256. Read once when a chain is built.
 *
 * @param label how messages name the model: {@code model /path/file.onnx} or {@code model builtin (resource)}
 * @param bytes the file's content
 * @param sha256Hex SHA-256 of the bytes, 64 lower-case hex digits
 */
record ModelFile(String label, byte[] bytes, String sha256Hex) {
    /** Word that selects the shipped model. */
    static final String BUILTIN = "builtin";
    /** Class-path resource of the shipped model. */
    static final String BUILTIN_RESOURCE = "/dev/afterglow/filters/learned/ember-3.onnx";
    /** Largest model file read, in bytes. */
    static final long MAX_BYTES = 512L << 20;

    /**
     * Reads {@code model}: {@value #BUILTIN} for the shipped model, else a file path (relative to
     * the working directory).
     *
     * @throws ChainSpecException if it is missing, unreadable or too large
     */
    static ModelFile read(String model) {
        if (BUILTIN.equals(model)) {
            String label = "model builtin (" + BUILTIN_RESOURCE + ")";
            try (InputStream in = ModelFile.class.getResourceAsStream(BUILTIN_RESOURCE)) {
                if (in == null) {
                    throw new ChainSpecException("learned-recon.model=builtin: the shipped model " + BUILTIN_RESOURCE
                            + " is not in this build; give a model file, e.g. learned-recon(model=/path/to/model.onnx)");
                }
                return of(label, in.readNBytes((int) MAX_BYTES + 1));
            } catch (IOException e) {
                throw new ChainSpecException(label + ": cannot read (" + e.getMessage() + ")");
            }
        }
        String label = "model " + model;
        Path path;
        try {
            path = Path.of(model);
        } catch (java.nio.file.InvalidPathException e) {
            throw new ChainSpecException(label + ": not a valid path (" + e.getMessage() + ")");
        }
        if (!Files.exists(path)) {
            throw new ChainSpecException(label + ": no such file (working directory " + Path.of("").toAbsolutePath() + ")");
        }
        if (!Files.isRegularFile(path)) {
            throw new ChainSpecException(label + ": not a regular file");
        }
        try {
            long size = Files.size(path);
            if (size > MAX_BYTES) {
                throw new ChainSpecException(label + ": " + size + " bytes > " + MAX_BYTES);
            }
            return of(label, Files.readAllBytes(path));
        } catch (IOException e) {
            throw new ChainSpecException(label + ": cannot read (" + e + ")");
        }
    }

    private static ModelFile of(String label, byte[] bytes) {
        if (bytes.length > MAX_BYTES) {
            throw new ChainSpecException(label + ": more than " + MAX_BYTES + " bytes");
        }
        if (bytes.length == 0) {
            throw new ChainSpecException(label + ": empty file; expected an ONNX model");
        }
        try {
            byte[] digest = MessageDigest.getInstance("SHA-256").digest(bytes);
            return new ModelFile(label, bytes, HexFormat.of().formatHex(digest));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is required of every Java platform", e);
        }
    }
}
