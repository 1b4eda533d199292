package dev.afterglow.node.assess;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.AfterglowCli;
import java.awt.image.BufferedImage;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import javax.imageio.ImageIO;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import picocli.CommandLine;

class AssessCommandTest {
    @TempDir
    Path tempDir;

    private record Result(int code, String out, String err) {
    }

    private static Result run(String... args) {
        StringWriter err = new StringWriter();
        PrintStream saved = System.out;
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        int code;
        try {
            System.setOut(new PrintStream(captured, true, StandardCharsets.UTF_8));
            CommandLine cl = AfterglowCli.commandLine();
            cl.setErr(new PrintWriter(err, true));
            code = cl.execute(args);
        } finally {
            System.setOut(saved);
        }
        return new Result(code, captured.toString(StandardCharsets.UTF_8), err.toString());
    }

    @ParameterizedTest
    @CsvSource(delimiter = '|', value = {
        "--seconds|500|--seconds=500.0 outside [0.5, 120]",
        "--scene|lobby|--scene=lobby: unknown; expected one of parcel-line, dock-door, orchard-pan",
        "--width|10|--width=10 outside [32, 1280]",
        "--warmup|9|--warmup=9.0 outside [0, --seconds=5.0)",
        "--exposure|60|--exposure=60.0 outside [0.01, 50] ms (the frame interval)",
        "--snapshots|9|--snapshots=9 outside [0, 8]",
        "--noise|-1|--noise=-1.0 outside [0, 100]",
        "--eval-rate|0|--eval-rate=0.0 outside [0.5, 50]",
        "--contrast|3|--contrast=3.0 outside [0.05, 1]",
        "--chain|high-pass(cutoff=20000rad/s)|high-pass.cutoff=20000rad/s > 10000rad/s",
        "--seconds|abc|Invalid value for option '--seconds'",
    })
    void shouldRefuseBadOptionsWithOneLineNamingThem(String option, String value, String message) {
        Result r = run("assess", "--out", tempDir.toString(), option, value);
        assertEquals(2, r.code(), r.err());
        String text = r.err().trim();
        assertEquals(1, text.lines().count(), text);
        assertTrue(text.startsWith("afterglow: ") && text.contains(message), text);
    }

    @Test
    void shouldRefuseAnOutputPathThatIsAFile(@TempDir Path dir) throws Exception {
        Path file = Files.writeString(dir.resolve("taken"), "x");
        Result r = run("assess", "--out", file.toString());
        assertEquals(2, r.code());
        assertTrue(r.err().contains("exists and is not a folder"), r.err());
    }

    @Test
    void shouldPrintTableAndWriteCsvAndLabelledContactSheet(@TempDir Path dir) throws Exception {
        Result r = run("assess", "--scene", "dock-door", "--width", "64", "--height", "48", "--seconds", "1.5",
                "--eval-rate", "10", "--warmup", "0.5", "--snapshots", "2", "--seeds", "5,6", "--out", dir.toString());
        assertEquals(0, r.code(), r.err());
        String out = r.out();
        assertTrue(out.contains("least-squares affine fit"), out);
        List<String> labels = List.of("flat", "hold-frame", "plain-comp", "high-pass+dn", "default");
        for (String label : labels) {
            assertTrue(out.lines().anyMatch(l -> l.startsWith(label + " ")), label + " missing in\n" + out);
        }
        assertTrue(out.contains("mean of 22 evaluations"), "11 per seed, pooled over two seeds\n" + out);
        assertTrue(out.contains("SSIM per seed"), out);

        List<String> csv = Files.readAllLines(dir.resolve("dock-door-metrics.csv"));
        assertEquals("seed,time_s,method,ssim,moving_ssim,psnr_db,mae_log,fit_scale,fit_offset,chain", csv.get(0));
        assertEquals(1 + 2 * 15 * labels.size(), csv.size());
        assertTrue(csv.get(1).startsWith("5,0.100,flat,"), csv.get(1));
        assertTrue(csv.get(csv.size() - 1).startsWith("6,1.500,default,"), csv.get(csv.size() - 1));

        BufferedImage png = ImageIO.read(dir.resolve("dock-door-contact.png").toFile());
        assertTrue(png.getWidth() > 8 * 64 && png.getHeight() > 2 * 48, png.getWidth() + "x" + png.getHeight());
        // Text is drawn in black on white: the title band holds dark pixels.
        int dark = 0;
        for (int y = 0; y < 40; y++) {
            for (int x = 0; x < png.getWidth(); x++) {
                if (png.getRaster().getSample(x, y, 0) == 0) {
                    dark++;
                }
            }
        }
        assertTrue(dark > 200, "title pixels " + dark);
    }

    @Test
    void shouldLabelGivenChainsByTheirReconstruction(@TempDir Path dir) throws Exception {
        Result r = run("assess", "--width", "48", "--height", "36", "--seconds", "0.6", "--warmup", "0.2",
                "--snapshots", "0", "--out", dir.toString(), "--chain", "high-pass(cutoff=2rad/s)",
                "--chain", "background-activity(window=10ms) | high-pass", "--chain", "high-pass(cutoff=20rad/s)");
        assertEquals(0, r.code(), r.err());
        assertTrue(r.out().contains("high-pass#2"), r.out());
        assertTrue(r.out().contains("high-pass+dn"), r.out());
        assertTrue(r.out().lines().anyMatch(l -> l.startsWith("flat ")), "the baselines head every table\n" + r.out());
        assertTrue(r.out().lines().anyMatch(l -> l.startsWith("hold-frame ")), r.out());
        Result eventsOnly = run("assess", "--width", "48", "--height", "36", "--seconds", "0.6", "--warmup", "0.2",
                "--snapshots", "0", "--frame-rate", "0", "--out", dir.toString(), "--chain", "high-pass");
        assertTrue(eventsOnly.out().lines().anyMatch(l -> l.startsWith("flat ")), eventsOnly.out());
        assertTrue(eventsOnly.out().lines().noneMatch(l -> l.startsWith("hold-frame ")), "no frames, no held frame\n" + eventsOnly.out());
        assertTrue(Files.exists(dir.resolve("parcel-line-metrics.csv")));
        assertTrue(Files.notExists(dir.resolve("parcel-line-contact.png")));
    }

    @Test
    void shouldUseTheScenesSensorConditionsUnlessAnOptionChangesThem(@TempDir Path dir) throws Exception {
        String[] args = {"assess", "--scene", "stockroom-pan_dark", "--width", "48", "--height", "36", "--seconds", "0.6",
            "--warmup", "0.2", "--snapshots", "0", "--out", dir.toString()};
        Result own = run(args);
        assertEquals(0, own.code(), own.err());
        // stockroom-pan: 5 Hz/pixel; its _dark variant x3 with the full scale x8 (SceneKind).
        assertTrue(own.out().contains("background activity 15 Hz/pixel"), own.out());
        assertTrue(own.out().contains("full scale 8,"), own.out());
        Result given = run(concat(args, "--noise", "2", "--hot-pixels", "0"));
        assertEquals(0, given.code(), given.err());
        assertTrue(given.out().contains("background activity 2 Hz/pixel, 0 hot pixels"), given.out());
        assertTrue(given.out().contains("full scale 8,"), given.out());
        Result rink = run("assess", "--scene", "rink-shot", "--width", "48", "--height", "36", "--seconds", "0.6",
                "--warmup", "0.2", "--snapshots", "0", "--out", dir.toString());
        assertTrue(rink.out().contains("refractory 800 us"), rink.out());
    }

    @Test
    void shouldWriteTheSameMetricsAndPictureForTheSameSeed(@TempDir Path a, @TempDir Path b) throws Exception {
        String[] args = {"assess", "--scene", "orchard-pan", "--width", "48", "--height", "36", "--seconds", "1",
            "--warmup", "0.2", "--snapshots", "1", "--seeds", "3"};
        assertEquals(0, run(concat(args, "--out", a.toString())).code());
        assertEquals(0, run(concat(args, "--out", b.toString())).code());
        assertEquals(-1L, Files.mismatch(a.resolve("orchard-pan-metrics.csv"), b.resolve("orchard-pan-metrics.csv")));
        assertEquals(-1L, Files.mismatch(a.resolve("orchard-pan-contact.png"), b.resolve("orchard-pan-contact.png")));
    }

    private static String[] concat(String[] head, String... tail) {
        String[] all = java.util.Arrays.copyOf(head, head.length + tail.length);
        System.arraycopy(tail, 0, all, head.length, tail.length);
        return all;
    }

    @Test
    void tinyFontShouldCoverEveryCharacterTheSheetWrites() {
        String all = "abcdefghijklmnopqrstuvwxyz0123456789 .,:;-+=/()%_<>'*|#";
        for (char c : all.toCharArray()) {
            assertTrue(TinyFont.covers(c), "no glyph for '" + c + "'");
        }
        assertEquals(List.of("ONE TWO", "THREE"), TinyFont.wrap("ONE TWO THREE", 8));
    }
}
