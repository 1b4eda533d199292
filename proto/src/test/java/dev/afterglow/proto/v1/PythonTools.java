package dev.afterglow.proto.v1;

import static org.junit.jupiter.api.Assertions.fail;
import static org.junit.jupiter.api.Assumptions.assumeTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;

/** Running Debian's Python and protoc from the tests: a tool that is missing fails under CI and skips elsewhere. */
public final class PythonTools {
    /** Debian's interpreter (its python3-* packages are the ones .ci/run installs). */
    public static final Path PYTHON = Path.of("/usr/bin/python3");
    /** Debian's protobuf-compiler. */
    public static final Path PROTOC = Path.of("/usr/bin/protoc");
    private static final long TIMEOUT_S = 120;

    private PythonTools() {
    }

    /** True if {@link #PYTHON} can import {@code module}. */
    public static boolean imports(String module) throws IOException, InterruptedException {
        if (!Files.isExecutable(PYTHON)) {
            return false;
        }
        Process process = new ProcessBuilder(PYTHON.toString(), "-I", "-c", "import " + module)
                .redirectOutput(ProcessBuilder.Redirect.DISCARD).redirectError(ProcessBuilder.Redirect.DISCARD).start();
        if (!process.waitFor(TIMEOUT_S, TimeUnit.SECONDS)) {
            process.destroyForcibly();
            fail(PYTHON + " -c 'import " + module + "' did not finish within " + TIMEOUT_S + " s");
        }
        return process.exitValue() == 0;
    }

    /** Fails under CI (where .ci/run installs the tool), skips elsewhere. */
    public static void requireTool(boolean present, String problem) {
        if (present) {
            return;
        }
        String message = problem + "; .ci/run installs it";
        if ("true".equals(System.getenv("CI"))) {
            fail(message + " (CI=true, so this is a failure, not a skip)");
        }
        assumeTrue(false, message + " (skipped outside CI)");
    }

    /** Runs {@code command} with extra environment, its output into the two files; fails on a non-zero exit or a time-out. */
    public static void run(List<String> command, Path stdout, Path stderr, Map<String, String> environment)
            throws IOException, InterruptedException {
        ProcessBuilder builder = new ProcessBuilder(command).redirectOutput(stdout.toFile()).redirectError(stderr.toFile());
        builder.environment().put("PYTHONDONTWRITEBYTECODE", "1");
        builder.environment().putAll(environment);
        Process process = builder.start();
        if (!process.waitFor(TIMEOUT_S, TimeUnit.SECONDS)) {
            process.destroyForcibly();
            fail(command + " did not finish within " + TIMEOUT_S + " s");
        }
        if (process.exitValue() != 0) {
            fail(command + " exited with " + process.exitValue() + ":\n" + Files.readString(stderr));
        }
    }
}
