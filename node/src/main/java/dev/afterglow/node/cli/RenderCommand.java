package dev.afterglow.node.cli;

import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.DefaultChains;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.node.config.ToneMapText;
import dev.afterglow.node.demo.GrayPngWriter;
import dev.afterglow.node.recording.NpyStreamWriter;
import dev.afterglow.node.recording.OfflineRenderer;
import dev.afterglow.node.recording.VideoEncoder;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingReader;
import dev.afterglow.recording.SegmentReader;
import java.io.BufferedWriter;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/** Runs a chain over a recording offline and writes its frames. */
@Command(name = "render", mixinStandardHelpOptions = true, sortOptions = false,
        description = {"Run a chain over a recording as fast as the CPU allows (no network, no pacing) and write its frames:",
                "frames.csv (time and provenance of each frame) always; PNGs, a numpy .npy array and a video on request.",
                "The frames are those a live node publishes for the same input, chain and rate when it kept up."})
public final class RenderCommand implements Callable<Integer> {
    @Option(names = "--in", required = true, description = "A recording: a segment file or the folder of its segments.")
    Path in;

    @Option(names = "--out", required = true, description = "Folder for the frames (created).")
    Path out;

    @Option(names = "--chain", description = "The chain (see 'afterglow stages'). Default: the node's default for the recorded sensor.")
    String chain;

    @Option(names = "--rate", description = "Frames per second of sensor time, 0.1 .. 10000. Default: ${DEFAULT-VALUE}")
    double rateHz = 50;

    @Option(names = "--tone-map", description = "8-bit tone map, as a sensor's tone-map setting. Default: ${DEFAULT-VALUE}")
    String toneMap = "percentile 1 99";

    @Option(names = "--png-every", description = "Write every N-th frame as PNG (0: none), 0 .. 1000000. Default: ${DEFAULT-VALUE}")
    int pngEvery = 0;

    @Option(names = "--npy", description = "gray8 (frames.npy, uint8), log (frames-log.npy, float32 log intensity), both or none. Default: ${DEFAULT-VALUE}")
    String npy = "gray8";

    @Option(names = "--video", paramLabel = "FILE.mp4", description = "Also encode an H.264 MP4 at the frame rate (needs Debian's ffmpeg).")
    Path video;

    @Override
    public Integer call() throws Exception {
        Checks.range("--rate", rateHz, 0.1, 10_000);
        Checks.range("--png-every", pngEvery, 0, 1_000_000);
        if (!java.util.List.of("gray8", "log", "both", "none").contains(npy)) {
            throw new IllegalArgumentException("--npy=" + npy + ": gray8, log, both or none");
        }
        ToneMapper toneMapper = new ToneMapper(ToneMapText.parse("--tone-map", toneMap));
        try (RecordingReader reader = RecordingReader.open(in)) {
            long[] span = sensorSpan(reader.segments());
            SensorHello hello = reader.header().getHello();
            int w = hello.getWidth();
            int h = hello.getHeight();
            String spec = chain != null ? chain : DefaultChains.forSensor(hello.getSendsFrames()).toString();
            Files.createDirectories(out);
            long started = System.nanoTime();
            try (Chain built = Chain.build(spec, w, h);
                    NpyStreamWriter gray = npy.equals("gray8") || npy.equals("both") ? new NpyStreamWriter(out.resolve("frames.npy"), false, h, w) : null;
                    NpyStreamWriter logs = npy.equals("log") || npy.equals("both") ? new NpyStreamWriter(out.resolve("frames-log.npy"), true, h, w) : null;
                    VideoEncoder encoder = video == null ? null : new VideoEncoder(video, w, h, rateHz);
                    BufferedWriter csv = Files.newBufferedWriter(out.resolve("frames.csv"), StandardCharsets.UTF_8)) {
                csv.write("frame,grid_index,time_us,events_applied,events_dropped,readout_ns,inference_ns,model\n");
                Progress progress = new Progress(span[0], span[1]);
                long[] count = {0};
                boolean needGray = gray != null || encoder != null || pngEvery > 0;
                OfflineRenderer.Result r = new OfflineRenderer(built, w, h, rateHz, needGray ? toneMapper : null).run(reader, (index, timeUs, log, g, facts) -> {
                    long k = count[0]++;
                    csv.write(k + "," + index + "," + timeUs + "," + facts.eventsApplied() + "," + facts.eventsDropped() + ","
                            + facts.readoutNanos() + "," + facts.inferenceNanos() + "," + facts.model() + "\n");
                    if (gray != null) {
                        gray.append(g);
                    }
                    if (logs != null) {
                        logs.append(log);
                    }
                    if (encoder != null) {
                        encoder.frame(g);
                    }
                    if (pngEvery > 0 && k % pngEvery == 0) {
                        GrayPngWriter.write(out.resolve(String.format(Locale.ROOT, "frame-%06d.png", k)), w, h, g);
                    }
                }, progress::at);
                progress.done();
                double seconds = (System.nanoTime() - started) * 1e-9;
                for (String p : r.problems()) {
                    System.err.println("afterglow render: " + p);
                }
                System.out.printf(Locale.ROOT, "afterglow render: %d frames at %.4g Hz from %d events%s in %.2f s (%.2f M events/s) with %s, into %s%n",
                        r.frames(), rateHz, r.events(), r.sensorFrames() > 0 ? " and " + r.sensorFrames() + " sensor frames" : "",
                        seconds, r.events() / Math.max(1e-9, seconds) / 1e6, built.spec(), out);
                return r.problems().isEmpty() ? 0 : 1;
            }
        }
    }

    /** First and last sensor time in the segments' indexes (for the progress bar); 0, 1 if they have none. */
    private static long[] sensorSpan(java.util.List<Path> segments) {
        long first = Long.MAX_VALUE;
        long last = Long.MIN_VALUE;
        for (Path segment : segments) {
            try (SegmentReader s = new SegmentReader(segment)) {
                for (var e : s.readIndex()) {
                    first = Math.min(first, e.getSensorTimeUs());
                    last = Math.max(last, e.getSensorTimeUs());
                }
            } catch (IOException e) {
                // no index from a damaged segment: the bar is only approximate
            }
        }
        return first <= last ? new long[] {first, last} : new long[] {0, 1};
    }

    /** A one-line progress bar on standard error, redrawn at most every 200 ms. */
    private static final class Progress {
        private final long firstUs;
        private final long spanUs;
        private long lastDrawNanos;

        Progress(long firstUs, long lastUs) {
            this.firstUs = firstUs;
            this.spanUs = Math.max(1, lastUs - firstUs);
        }

        void at(long timeUs) {
            long now = System.nanoTime();
            if (now - lastDrawNanos < 200_000_000L) {
                return;
            }
            lastDrawNanos = now;
            draw(Math.min(1.0, Math.max(0.0, (timeUs - firstUs) / (double) spanUs)), timeUs);
        }

        void done() {
            if (lastDrawNanos != 0) {
                draw(1.0, firstUs + spanUs);
                System.err.println();
            }
        }

        private void draw(double fraction, long timeUs) {
            int filled = (int) Math.round(fraction * 30);
            System.err.printf(Locale.ROOT, "\r[%s%s] %3.0f%%  t=%.2f s", "#".repeat(filled), ".".repeat(30 - filled),
                    100 * fraction, timeUs * 1e-6);
        }
    }
}
