package dev.afterglow.node.recording;

import java.io.Closeable;
import java.io.IOException;
import java.io.OutputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;

/**
 * Encodes 8-bit gray frames into a video a person can play (H.264 in MP4, yuv420p, the widely
 * playable choice) by piping raw frames to Debian's {@code ffmpeg}: a maintained encoder, where a
 * pure-Java H.264 encoder from Maven Central would be years behind it. Odd sizes are padded by one
 * pixel, as yuv420p needs even sides.
 */
public final class VideoEncoder implements Closeable {
    private final Process process;
    private final OutputStream in;
    private final Path log;
    private final Path out;

    /**
     * Starts ffmpeg writing {@code out} at {@code fps} frames per second.
     *
     * @throws IOException if ffmpeg cannot be started (not installed: Debian's {@code ffmpeg} package)
     */
    public VideoEncoder(Path out, int width, int height, double fps) throws IOException {
        this.out = out;
        this.log = Files.createTempFile("afterglow-ffmpeg", ".log");
        List<String> command = List.of(ffmpeg(), "-hide_banner", "-loglevel", "error", "-y",
                "-f", "rawvideo", "-pix_fmt", "gray", "-s", width + "x" + height, "-framerate", Double.toString(fps), "-i", "-",
                "-vf", "pad=ceil(iw/2)*2:ceil(ih/2)*2", "-c:v", "libx264", "-preset", "veryfast", "-crf", "18",
                "-pix_fmt", "yuv420p", "-movflags", "+faststart", out.toString());
        try {
            this.process = new ProcessBuilder(command).redirectOutput(log.toFile()).redirectErrorStream(true).start();
        } catch (IOException e) {
            throw new IOException("cannot start ffmpeg for --video (install Debian's ffmpeg package): " + e.getMessage(), e);
        }
        this.in = process.getOutputStream();
    }

    /** ffmpeg on the PATH, or the Debian location. */
    private static String ffmpeg() {
        return Files.isExecutable(Path.of("/usr/bin/ffmpeg")) ? "/usr/bin/ffmpeg" : "ffmpeg";
    }

    /** True if ffmpeg can be run here. */
    public static boolean available() {
        try {
            Process p = new ProcessBuilder(ffmpeg(), "-version").redirectErrorStream(true)
                    .redirectOutput(ProcessBuilder.Redirect.DISCARD).start();
            return p.waitFor(30, TimeUnit.SECONDS) && p.exitValue() == 0;
        } catch (IOException e) {
            return false;
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return false;
        }
    }

    /** Appends one frame (width * height bytes). */
    public void frame(byte[] gray) throws IOException {
        try {
            in.write(gray);
        } catch (IOException e) {
            throw new IOException("ffmpeg stopped taking frames: " + tail(), e);
        }
    }

    private String tail() {
        try {
            String text = Files.readString(log);
            return text.length() > 2000 ? text.substring(text.length() - 2000) : text;
        } catch (IOException e) {
            return "(no ffmpeg output)";
        }
    }

    /** Ends the stream and waits for ffmpeg to finish the file. */
    @Override
    public void close() throws IOException {
        try {
            in.close();
            if (!process.waitFor(10, TimeUnit.MINUTES)) {
                process.destroyForcibly();
                throw new IOException("ffmpeg did not finish " + out);
            }
            if (process.exitValue() != 0) {
                throw new IOException("ffmpeg failed on " + out + ": " + tail());
            }
        } catch (InterruptedException e) {
            process.destroyForcibly();
            Thread.currentThread().interrupt();
            throw new IOException("interrupted while ffmpeg finished " + out, e);
        } finally {
            Files.deleteIfExists(log);
        }
    }
}
