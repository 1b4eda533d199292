package dev.afterglow.filters.readout;

import dev.afterglow.filters.recon.Reconstruction;

/**
 * Reads a {@link Reconstruction} out at a given time into reusable buffers: float log intensity
 * and, on request, 8-bit grey through a {@link ToneMapper}. Threading: the reconstruction's owner
 * thread.
 */
public final class FrameReader {
    private final Reconstruction reconstruction;
    private final ToneMapper toneMapper;
    private final float[] log;
    private final byte[] gray;

    public FrameReader(Reconstruction reconstruction, ToneMap toneMap) {
        this.reconstruction = reconstruction;
        this.toneMapper = new ToneMapper(toneMap);
        int n = reconstruction.width() * reconstruction.height();
        this.log = new float[n];
        this.gray = new byte[n];
    }

    /** Log intensity at {@code timeUs}; the returned array is reused by the next call. */
    public float[] readLog(long timeUs) {
        reconstruction.readLog(timeUs, log);
        return log;
    }

    /** 8-bit tone-mapped image at {@code timeUs}; the returned array is reused by the next call. */
    public byte[] readGray8(long timeUs) {
        reconstruction.readLog(timeUs, log);
        toneMapper.apply(log, log.length, gray);
        return gray;
    }

    /** The tone mapper, for the range it used last. */
    public ToneMapper toneMapper() {
        return toneMapper;
    }
}
