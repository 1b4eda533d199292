package dev.afterglow.node.config;

import dev.afterglow.recording.RecordingWriter;

/**
 * A sensor's recording: where, how segments are cut, how much is kept (a flight recorder keeps
 * only the newest), and how often data is flushed and forced to disk. Absent: no recording.
 */
public final class RecordConfig {
    /** Record while true; can be switched at run time. */
    public boolean enabled = true;
    /** Folder of the recordings; each sensor records into FOLDER/SENSOR-ID/. */
    public String folder = "recordings";
    /** A segment is closed at this size. */
    public double segmentMb = 256;
    /** A segment is closed after this much arrival time. */
    public double segmentMinutes = 10;
    /** Flight recorder: keep only the newest this many MB (plus one segment); 0 keeps everything. */
    public double keepMb;
    /** Flight recorder: keep only the newest this many minutes (plus one segment); 0 keeps everything. */
    public double keepMinutes;
    /** Data is flushed at least this often: at most this much is lost in a crash. */
    public int flushMs = 1000;
    /** Force flushed data to the device (fsync), not only to the operating system. */
    public boolean fsync = true;
    /** Messages waiting for the disk at most; beyond, new ones are dropped and counted. */
    public double queueMb = 64;

    /** Checks the values; {@code at} prefixes the setting in messages. */
    public void validate(String at) {
        Checks.present(at + ".folder", folder);
        Checks.range(at + ".segment-mb", segmentMb, 0.01, 4096);
        Checks.range(at + ".segment-minutes", segmentMinutes, 0.001, 24 * 60);
        Checks.range(at + ".keep-mb", keepMb, 0, 1e7);
        Checks.range(at + ".keep-minutes", keepMinutes, 0, 1e6);
        Checks.range(at + ".flush-ms", flushMs, 0, 600_000);
        Checks.range(at + ".queue-mb", queueMb, 1, 4096);
    }

    /** The writer settings these values make. */
    public RecordingWriter.Settings settings() {
        return new RecordingWriter.Settings((long) (segmentMb * (1 << 20)), (long) (segmentMinutes * 60e6), 1_000_000L,
                flushMs * 1000L, fsync, keepMb > 0 ? (long) (keepMb * (1 << 20)) : Long.MAX_VALUE,
                keepMinutes > 0 ? (long) (keepMinutes * 60e6) : Long.MAX_VALUE);
    }

    /** A copy. */
    public RecordConfig copy() {
        RecordConfig c = new RecordConfig();
        c.enabled = enabled;
        c.folder = folder;
        c.segmentMb = segmentMb;
        c.segmentMinutes = segmentMinutes;
        c.keepMb = keepMb;
        c.keepMinutes = keepMinutes;
        c.flushMs = flushMs;
        c.fsync = fsync;
        c.queueMb = queueMb;
        return c;
    }
}
