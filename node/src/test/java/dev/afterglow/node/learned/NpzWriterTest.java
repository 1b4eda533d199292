package dev.afterglow.node.learned;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * What {@link NpzWriter} writes is read back by numpy itself ({@code numpy.load}, the reference
 * reader of the format) with the same dtypes, shapes and values. Needs Debian's python3-numpy: in
 * CI (CI=true) its absence fails the test, elsewhere it skips.
 */
public class NpzWriterTest {
    private static final Path PYTHON = Path.of("/usr/bin/python3");

    @Test
    void numpyReadsEveryArrayBack(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("a.npz");
        try (NpzWriter npz = new NpzWriter(file)) {
            npz.uint16("x", new int[] {0, 1, 65535, 7}, 4, 4);
            npz.int64("t", new long[] {-1, Long.MAX_VALUE, 3}, 3, 3);
            npz.int8("p", new byte[] {1, -1, 1}, 3, 3);
            npz.float32("img", new float[] {0.5f, -2f, 1e-3f, 7f, 8f, 9f}, 6, 2, 3);
            npz.float64("scalar", new double[] {Math.PI}, 1);
        }
        String script = String.join("\n",
                "import numpy as np, sys",
                "d = np.load(sys.argv[1])",
                "for k in sorted(d.files):",
                "    a = d[k]",
                "    print(k, a.dtype.str, a.shape, a.ravel().tolist())");
        String out = python(script, file.toString());
        assertEquals(String.join("\n",
                "img <f4 (2, 3) [0.5, -2.0, 0.0010000000474974513, 7.0, 8.0, 9.0]",
                "p |i1 (3,) [1, -1, 1]",
                "scalar <f8 () [3.141592653589793]",
                "t <i8 (3,) [-1, 9223372036854775807, 3]",
                "x <u2 (4,) [0, 1, 65535, 7]") + "\n", out);
    }

    public static String python(String script, String arg) throws Exception {
        boolean ci = "true".equals(System.getenv("CI"));
        boolean ok = Files.isExecutable(PYTHON)
                && new ProcessBuilder(PYTHON.toString(), "-c", "import numpy").start().waitFor() == 0;
        if (!ok) {
            if (ci) {
                throw new AssertionError("python3-numpy is required in CI");
            }
            Assumptions.abort("python3-numpy not installed");
        }
        Process p = new ProcessBuilder(PYTHON.toString(), "-c", script, arg).redirectErrorStream(true).start();
        if (!p.waitFor(60, TimeUnit.SECONDS)) {
            p.destroyForcibly();
            throw new AssertionError("python timed out");
        }
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertEquals(0, p.exitValue(), out);
        return out;
    }
}
