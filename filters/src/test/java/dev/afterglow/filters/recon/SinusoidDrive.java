package dev.afterglow.filters.recon;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.synth.EventGenerationModel;

/**
 * Drives a 1x1 sensor with the log intensity {@code L(t) = A·sin(w·t)}: the signal is turned into
 * events by the ideal event generation model in fine linear steps, fed in time order to a
 * reconstruction, optionally accompanied by frames carrying the true {@code L} at a fixed rate, and
 * the reconstruction's readout is fitted with a sinusoid at w after a settling time.
 */
final class SinusoidDrive {
    /** Receives a frame's time and its log intensity (the true signal at that time). */
    interface FrameSink {
        void frame(long timeUs, float logIntensity);
    }

    private SinusoidDrive() {
    }

    /**
     * Runs the drive from t = 0 to {@code endUs}, fitting samples at and after {@code settleUs}.
     *
     * @param frameIntervalUs 0 for no frames, else a frame every this many microseconds (from t = 0)
     * @param frames receives the frames; ignored when {@code frameIntervalUs} is 0
     */
    static SinusoidFit run(Reconstruction recon, double amplitude, double contrast, double w,
            long settleUs, long endUs, long frameIntervalUs, FrameSink frames) {
        long stepUs = stepUs(w);
        EventGenerationModel model = new EventGenerationModel(1, 1, contrast);
        model.start(0, new double[] {0});
        EventBatch batch = new EventBatch(256);
        double[] next = new double[1];
        float[] out = new float[1];
        SinusoidFit fit = new SinusoidFit(w);
        if (frameIntervalUs > 0) {
            frames.frame(0, 0f);
        }
        for (long t = stepUs; t <= endUs; t += stepUs) {
            next[0] = amplitude * Math.sin(w * t * 1e-6);
            batch.reset(t - stepUs);
            model.advance(t, next, batch);
            recon.process(batch);
            if (frameIntervalUs > 0 && t % frameIntervalUs == 0) {
                frames.frame(t, (float) next[0]);
            }
            if (t >= settleUs) {
                recon.readLog(t, out);
                fit.add(t * 1e-6, out[0]);
            }
        }
        return fit;
    }

    /**
     * Step length: the signal moves by at most 0.02 rad of phase per step (so linear steps are
     * within 1e-4·A of the sinusoid), capped at 50 us, and a divisor of 1000 us so 1 kHz frames
     * fall on step ends.
     */
    static long stepUs(double w) {
        long bound = (long) (0.02 / w * 1e6);
        long[] divisors = {50, 40, 25, 20, 10, 8, 5, 4, 2, 1};
        for (long d : divisors) {
            if (d <= bound) {
                return d;
            }
        }
        return 1;
    }
}
