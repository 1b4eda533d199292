package dev.afterglow.node.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.node.AfterglowCli;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.config.ToneMapText;
import dev.afterglow.node.demo.SyntheticFeed;
import dev.afterglow.node.learned.NpzWriterTest;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingReader;
import dev.afterglow.recording.RecordingWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code afterglow render} on a recorded synthetic sensor: one CSV row per frame on the grid, the
 * frames in a .npy that numpy itself reads back (the reference reader of the format) with the
 * values the renderer made, PNGs, and, where ffmpeg is installed, an MP4 that ffprobe (FFmpeg's own
 * prober) reads as H.264 with every frame.
 */
class RenderCommandTest {
    private static final int W = 96;
    private static final int H = 72;
    private static final String CHAIN = "refractory(period=100us) | patch-support | high-pass";
    @TempDir
    Path dir;

    private Path record() throws Exception {
        Path folder = dir.resolve("rec");
        SensorHello hello = SensorClient.hello("yard", W, H, true, "");
        try (RecordingWriter w = RecordingWriter.create(folder, "yard", hello, "test", 0, RecordingWriter.Settings.keepAll())) {
            w.write(0, Envelope.newBuilder().setSchemaVersion(1).setHello(hello).build());
            new SyntheticFeed(SceneKind.DOCK_DOOR, W, H, null, 3).run(SyntheticFeed.recording(w, "yard"), "yard", 0.5, 1000, 0, true);
        }
        return folder;
    }

    @Test
    void shouldWriteEveryFrameAsCsvNpyPngAndVideo() throws Exception {
        Path rec = record();
        Path out = dir.resolve("out");
        boolean video = VideoEncoder.available();
        List<String> args = new java.util.ArrayList<>(List.of("render", "--in", rec.toString(), "--out", out.toString(),
                "--chain", CHAIN, "--rate", "40", "--npy", "both", "--png-every", "5"));
        if (video) {
            args.addAll(List.of("--video", out.resolve("yard.mp4").toString()));
        }
        assertEquals(0, AfterglowCli.commandLine().execute(args.toArray(String[]::new)));

        // What the renderer makes for this recording, computed here directly.
        long[] graySum = {0};
        double[] logSum = {0};
        int[] frames = {0};
        try (Chain chain = Chain.build(CHAIN, W, H); RecordingReader reader = RecordingReader.open(rec)) {
            new OfflineRenderer(chain, W, H, 40, new ToneMapper(ToneMapText.parse("tone-map", "percentile 1 99")))
                    .run(reader, (index, timeUs, log, gray, facts) -> {
                        frames[0]++;
                        for (int i = 0; i < gray.length; i++) {
                            graySum[0] += gray[i] & 0xFF;
                            logSum[0] += log[i];
                        }
                    }, t -> { });
        }
        assertTrue(frames[0] >= 18 && frames[0] <= 20, "40 Hz over 0.5 s: " + frames[0]);
        List<String> csv = Files.readAllLines(out.resolve("frames.csv"));
        assertEquals(frames[0] + 1, csv.size(), "a header and one row per frame");
        assertEquals("frame,grid_index,time_us,events_applied,events_dropped,readout_ns,inference_ns,model", csv.get(0));
        assertTrue(csv.get(1).startsWith("0,1,25000,"), csv.get(1));
        assertEquals((frames[0] + 4) / 5, Files.list(out).filter(p -> p.toString().endsWith(".png")).count());

        String numpy = NpzWriterTest.python(String.join("\n",
                "import numpy as np, sys, os",
                "g = np.load(os.path.join(sys.argv[1], 'frames.npy'))",
                "l = np.load(os.path.join(sys.argv[1], 'frames-log.npy'))",
                "print(g.dtype.str, g.shape, int(g.astype(np.int64).sum()), l.dtype.str, l.shape)",
                "print(repr(float(l.astype(np.float64).sum())))"), out.toString());
        String[] lines = numpy.split("\n");
        assertEquals("|u1 (" + frames[0] + ", " + H + ", " + W + ") " + graySum[0] + " <f4 (" + frames[0] + ", " + H + ", " + W + ")",
                lines[0]);
        assertEquals(logSum[0], Double.parseDouble(lines[1]), Math.abs(logSum[0]) * 1e-9 + 1e-6, "the log images");

        if (!video) {
            if ("true".equals(System.getenv("CI"))) {
                throw new AssertionError("ffmpeg is required in CI (.ci/run installs Debian's ffmpeg)");
            }
            Assumptions.abort("ffmpeg not installed: the video part is not checked here");
        }
        Process probe = new ProcessBuilder("ffprobe", "-v", "error", "-select_streams", "v:0", "-count_frames",
                "-show_entries", "stream=codec_name,width,height,nb_read_frames", "-of", "csv=p=0",
                out.resolve("yard.mp4").toString()).redirectErrorStream(true).start();
        try {
            assertTrue(probe.waitFor(60, TimeUnit.SECONDS));
            String info = new String(probe.getInputStream().readAllBytes()).trim();
            assertEquals("h264," + W + "," + H + "," + frames[0], info);
        } finally {
            probe.destroyForcibly();
        }
    }
}
