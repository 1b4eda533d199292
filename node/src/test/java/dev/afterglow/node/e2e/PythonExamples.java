package dev.afterglow.node.e2e;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.junit.jupiter.api.Assumptions;

/**
 * What the tests of the Python examples share: Debian's python3 with its packages and protoc,
 * required in CI (CI=true: a missing tool fails the test) and optional elsewhere (the test is
 * skipped); the schema's generated Python code; running a script to its end.
 */
public final class PythonExamples {
    public static final Path PYTHON = Path.of("/usr/bin/python3");
    public static final Path PROTOC = Path.of("/usr/bin/protoc");

    private PythonExamples() {
    }

    /** The repository root (tests run in the node module). */
    public static Path root() {
        return Path.of("..").toAbsolutePath().normalize();
    }

    /** An example script under examples/python. */
    public static Path script(String name) {
        return root().resolve("examples/python").resolve(name);
    }

    /**
     * Fails (CI) or skips (elsewhere) unless python3, protoc and python3-numpy, python3-protobuf
     * and the given further modules are there.
     *
     * @param modules further Python modules to import, e.g. {@code confluent_kafka}
     * @param packages the Debian packages that bring them, for the message
     */
    public static void requireTools(List<String> modules, String packages) throws Exception {
        String missing = null;
        if (!Files.isExecutable(PYTHON)) {
            missing = PYTHON + " not found";
        } else if (!Files.isExecutable(PROTOC)) {
            missing = PROTOC + " not found (Debian package protobuf-compiler)";
        } else {
            String imports = String.join(", ", Stream.concat(Stream.of("numpy", "google.protobuf"),
                    modules.stream()).toList());
            Process p = new ProcessBuilder(PYTHON.toString(), "-c", "import " + imports).redirectErrorStream(true).start();
            if (!p.waitFor(30, TimeUnit.SECONDS) || p.exitValue() != 0) {
                missing = "python3-numpy or python3-protobuf" + (packages.isEmpty() ? "" : " or " + packages) + " not installed";
            }
        }
        if (missing != null) {
            if ("true".equals(System.getenv("CI"))) {
                throw new AssertionError("CI must provide the Python example's tools: " + missing);
            }
            Assumptions.assumeTrue(false, "skipped outside CI: " + missing);
        }
    }

    /** Generates the schema's Python code (afterglow.proto) into {@code gen}. */
    public static void generate(Path gen) throws Exception {
        Path protoDir = root().resolve("proto/src/main/proto");
        run(List.of(PROTOC.toString(), "--python_out=" + gen, "-I" + protoDir,
                protoDir.resolve("afterglow/v1/afterglow.proto").toString()), gen, 30);
    }

    /** Runs {@code command} with {@code pythonPath} as PYTHONPATH; fails unless it exits 0 within the time; returns its output. */
    public static String run(List<String> command, Path pythonPath, int timeoutS) throws Exception {
        ProcessBuilder pb = new ProcessBuilder(command).redirectErrorStream(true);
        pb.environment().put("PYTHONPATH", pythonPath.toString());
        Process p = pb.start();
        if (!p.waitFor(timeoutS, TimeUnit.SECONDS)) {
            p.destroyForcibly();
            throw new AssertionError("timed out: " + command);
        }
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertEquals(0, p.exitValue(), command + "\n" + out);
        return out;
    }
}
