package dev.afterglow.node;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.stream.Stream;
import javax.imageio.ImageIO;
import java.awt.image.BufferedImage;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import picocli.CommandLine;

class AfterglowCliTest {

    private static int run(StringWriter err, String... args) {
        CommandLine cl = AfterglowCli.commandLine();
        cl.setErr(new PrintWriter(err, true));
        return cl.execute(args);
    }

    @Test
    void shouldRefuseOutOfRangeOptionWithOneLineNamingTheSetting() {
        StringWriter err = new StringWriter();
        int code = run(err, "demo", "--rate", "5000");
        assertEquals(2, code);
        String text = err.toString().trim();
        assertEquals(1, text.lines().count(), text);
        assertTrue(text.contains("--rate=5000.0 outside [1, 1000]"), text);
    }

    @Test
    void shouldRefuseBadChainWithTheStagesMessage() {
        StringWriter err = new StringWriter();
        int code = run(err, "demo", "--chain", "high-pass(cutoff=20000rad/s)");
        assertEquals(2, code);
        assertTrue(err.toString().contains("high-pass.cutoff=20000rad/s > 10000rad/s"), err.toString());
    }

    @Test
    void shouldRefuseUnknownOption() {
        StringWriter err = new StringWriter();
        assertEquals(2, run(err, "demo", "--no-such-option"));
        assertTrue(err.toString().startsWith("afterglow: "), err.toString());
    }

    @Test
    void demoShouldStreamThroughALiveNodeAndWriteSnapshots(@TempDir Path dir) throws Exception {
        PrintStream saved = System.out;
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        int code;
        try {
            System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
            code = run(new StringWriter(), "demo", "--seconds", "2", "--width", "64", "--height", "48",
                    "--rate", "50", "--watch-rate", "10", "--save-every", "5", "--out", dir.toString());
        } finally {
            System.setOut(saved);
        }
        assertEquals(0, code);
        String out = captured.toString(StandardCharsets.UTF_8);
        // About 2 s at 10 frames/s; frames due while the JIT warms up may be shed on a loaded machine.
        long frames = out.lines().filter(l -> l.startsWith("parcel-line #")).count();
        assertTrue(frames >= 10 && frames <= 20, frames + " frames\n" + out);
        assertTrue(out.contains(frames + " frames received"), out);
        List<Path> pngs;
        try (Stream<Path> files = Files.list(dir)) {
            pngs = files.sorted().toList();
        }
        assertEquals(frames / 5, pngs.size(), pngs.toString());
        BufferedImage png = ImageIO.read(pngs.get(pngs.size() - 1).toFile());
        assertEquals(64, png.getWidth());
        assertEquals(48, png.getHeight());
        // The belt moves, so the reconstruction shows structure rather than a flat grey.
        int min = 255;
        int max = 0;
        for (int y = 0; y < 48; y++) {
            for (int x = 0; x < 64; x++) {
                int v = png.getRaster().getSample(x, y, 0);
                min = Math.min(min, v);
                max = Math.max(max, v);
            }
        }
        assertTrue(max - min > 100, "frame range " + min + ".." + max);
    }

    @Test
    void stagesShouldPrintCanonicalChain() {
        PrintStream saved = System.out;
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        try {
            System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
            assertEquals(0, run(new StringWriter(), "stages", "refractory(period=2ms) | high-pass(cutoff=1Hz)"));
        } finally {
            System.setOut(saved);
        }
        assertTrue(captured.toString(StandardCharsets.UTF_8).startsWith("refractory(period=2000us) | high-pass(cutoff=6.283185307179586rad/s, contrast=0.2)"),
                captured.toString(StandardCharsets.UTF_8));
    }

    @Test
    void stagesShouldCheckALearnedModelForASensorSize(@org.junit.jupiter.api.io.TempDir java.nio.file.Path dir) {
        java.nio.file.Path model = dev.afterglow.filters.learned.TestModels.tiny(dir);
        PrintStream saved = System.out;
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        try {
            System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
            assertEquals(0, run(new StringWriter(), "stages", "--size", "346x260", "learned-recon(model=" + model + ")"));
        } finally {
            System.setOut(saved);
        }
        String out = captured.toString(StandardCharsets.UTF_8);
        assertTrue(out.contains("model tiny-contract@") && out.contains("follows the contract at 346x260"), out);
        StringWriter err = new StringWriter();
        java.nio.file.Path broken = dev.afterglow.filters.learned.TestModels.copy("refused/bins-mismatch.onnx", dir);
        assertEquals(2, run(err, "stages", "--size", "346x260", "learned-recon(model=" + broken + ")"));
        assertTrue(err.toString().contains("input `voxels` is [1, 3, -1, -1]; expected [1, 5, H, W]"), err.toString());
    }
}
