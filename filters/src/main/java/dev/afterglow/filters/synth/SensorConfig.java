package dev.afterglow.filters.synth;

import java.util.Locale;

/**
 * Settings of the {@link SyntheticSensor}, validated when built: every bad value is refused with a
 * message naming the setting, its value and the limit ({@code sensor.contrast=3.0 outside [0.01, 2]}).
 * Immutable; start from {@link #builder(int, int)} (defaults below) and change what you need.
 *
 * @param width pixels per row, 8 .. 8192 (default: the scene's)
 * @param height rows, 8 .. 8192, at most 2^26 pixels in all
 * @param contrast nominal contrast threshold C in natural-log units, 0.01 .. 2 (default 0.2)
 * @param mismatch pixel-to-pixel standard deviation of C as a fraction of C, 0 .. 0.5 (default
 *     0.03); ON and OFF thresholds are drawn independently per pixel
 * @param refractoryUs after an event a pixel is blind for this long, 0 .. 1 s (default 100 us);
 *     a level crossing in that time is lost (its reference still follows the signal)
 * @param backgroundRateHz background-activity noise per pixel, 0 .. 1000 Hz (default 1 Hz),
 *     independent Poisson processes with random polarity
 * @param hotPixels pixels that fire continually, 0 .. 10% of the pixels (default 5)
 * @param hotPixelRateHz rate of each hot pixel, 1 .. 1e5 Hz (default 500 Hz), Poisson
 * @param jitterUs standard deviation of the Gaussian timestamp jitter added to signal events,
 *     0 .. 1000 us (default 2 us)
 * @param frameRateHz rate of the sensor's own intensity frames, 0 (none) .. 1000 Hz (default 20)
 * @param exposureUs exposure of each frame, 1 us .. the frame interval (default 10 ms); motion
 *     during the exposure blurs the frame
 * @param fullScale irradiance (scene units) that fills the 8-bit range at the end of the exposure
 *     average, &gt; 0 (default 1); brighter pixels saturate at 255
 * @param readNoiseDn standard deviation of the frames' read noise in 8-bit steps, 0 .. 64 (default
 *     1.5): with the clip at 0 this is the noise floor
 * @param maxStepUs longest render step, 10 us .. 100 ms (default 5 ms); the sensor also keeps
 *     every step short enough that the scene moves at most a quarter pixel
 * @param seed seed of every random choice (mismatch, noise, hot pixels, jitter, read noise)
 */
public record SensorConfig(int width, int height, double contrast, double mismatch, int refractoryUs,
        double backgroundRateHz, int hotPixels, double hotPixelRateHz, double jitterUs, double frameRateHz,
        int exposureUs, double fullScale, double readNoiseDn, int maxStepUs, long seed) {

    /** Validates every setting. */
    public SensorConfig {
        range("width", width, 8, 8192);
        range("height", height, 8, 8192);
        if ((long) width * height > 1L << 26) {
            throw new IllegalArgumentException("sensor.width*height=" + ((long) width * height) + " > " + (1L << 26));
        }
        range("contrast", contrast, 0.01, 2);
        range("mismatch", mismatch, 0, 0.5);
        range("refractory", refractoryUs, 0, 1_000_000, "us");
        range("background-rate", backgroundRateHz, 0, 1000, "Hz");
        range("hot-pixels", hotPixels, 0, width * height / 10);
        range("hot-pixel-rate", hotPixelRateHz, 1, 1e5, "Hz");
        range("jitter", jitterUs, 0, 1000, "us");
        range("frame-rate", frameRateHz, 0, 1000, "Hz");
        double intervalUs = frameRateHz > 0 ? 1e6 / frameRateHz : 1e6;
        range("exposure", exposureUs, 1, Math.floor(intervalUs), "us");
        if (!(fullScale > 0) || !Double.isFinite(fullScale)) {
            throw new IllegalArgumentException("sensor.full-scale=" + fullScale + " must be finite and > 0");
        }
        range("read-noise", readNoiseDn, 0, 64);
        range("max-step", maxStepUs, 10, 100_000, "us");
    }

    private static void range(String setting, double v, double min, double max) {
        range(setting, v, min, max, "");
    }

    private static void range(String setting, double v, double min, double max, String unit) {
        if (!(v >= min && v <= max)) {
            throw new IllegalArgumentException("sensor." + setting + "=" + fmt(v) + unit + " outside ["
                    + fmt(min) + unit + ", " + fmt(max) + unit + "]");
        }
    }

    private static String fmt(double v) {
        return v == Math.rint(v) && Math.abs(v) < 1e15 ? Long.toString((long) v) : String.format(Locale.ROOT, "%s", v);
    }

    /** Frame interval in microseconds (rounded); 0 without frames. */
    public long frameIntervalUs() {
        return frameRateHz > 0 ? Math.round(1e6 / frameRateHz) : 0;
    }

    /** A builder starting from the defaults for a {@code width} x {@code height} sensor. */
    public static Builder builder(int width, int height) {
        return new Builder(width, height);
    }

    /** A builder starting from this configuration. */
    public Builder toBuilder() {
        Builder b = new Builder(width, height);
        b.contrast = contrast;
        b.mismatch = mismatch;
        b.refractoryUs = refractoryUs;
        b.backgroundRateHz = backgroundRateHz;
        b.hotPixels = hotPixels;
        b.hotPixelRateHz = hotPixelRateHz;
        b.jitterUs = jitterUs;
        b.frameRateHz = frameRateHz;
        b.exposureUs = exposureUs;
        b.fullScale = fullScale;
        b.readNoiseDn = readNoiseDn;
        b.maxStepUs = maxStepUs;
        b.seed = seed;
        return b;
    }

    /** Mutable builder with the documented defaults; {@link #build()} validates. */
    public static final class Builder {
        private int width;
        private int height;
        private double contrast = 0.2;
        private double mismatch = 0.03;
        private int refractoryUs = 100;
        private double backgroundRateHz = 1.0;
        private int hotPixels = 5;
        private double hotPixelRateHz = 500;
        private double jitterUs = 2;
        private double frameRateHz = 20;
        private int exposureUs = 10_000;
        private double fullScale = 1.0;
        private double readNoiseDn = 1.5;
        private int maxStepUs = 5_000;
        private long seed = 1;

        private Builder(int width, int height) {
            this.width = width;
            this.height = height;
        }

        /** Sensor geometry. */
        public Builder size(int width, int height) {
            this.width = width;
            this.height = height;
            return this;
        }

        /** Nominal contrast threshold C (log units). */
        public Builder contrast(double c) {
            this.contrast = c;
            return this;
        }

        /** Threshold mismatch: standard deviation as a fraction of C. */
        public Builder mismatch(double fraction) {
            this.mismatch = fraction;
            return this;
        }

        /** Pixel refractory period in microseconds. */
        public Builder refractoryUs(int us) {
            this.refractoryUs = us;
            return this;
        }

        /** Background-activity rate per pixel in Hz. */
        public Builder backgroundRateHz(double hz) {
            this.backgroundRateHz = hz;
            return this;
        }

        /** Number of hot pixels and the rate of each. */
        public Builder hotPixels(int count, double rateHz) {
            this.hotPixels = count;
            this.hotPixelRateHz = rateHz;
            return this;
        }

        /** Timestamp jitter (standard deviation) in microseconds. */
        public Builder jitterUs(double us) {
            this.jitterUs = us;
            return this;
        }

        /** Frame rate (0: no frames) and exposure time. */
        public Builder frames(double rateHz, int exposureUs) {
            this.frameRateHz = rateHz;
            this.exposureUs = exposureUs;
            return this;
        }

        /** Irradiance at full scale and read noise of the frames. */
        public Builder frameRange(double fullScale, double readNoiseDn) {
            this.fullScale = fullScale;
            this.readNoiseDn = readNoiseDn;
            return this;
        }

        /** Background-activity rate per pixel in Hz, as set so far. */
        public double backgroundRateHz() {
            return backgroundRateHz;
        }

        /** Irradiance at full scale, as set so far. */
        public double fullScale() {
            return fullScale;
        }

        /** Read noise of the frames in 8-bit steps, as set so far. */
        public double readNoiseDn() {
            return readNoiseDn;
        }

        /** Longest render step in microseconds. */
        public Builder maxStepUs(int us) {
            this.maxStepUs = us;
            return this;
        }

        /** Seed of all random choices. */
        public Builder seed(long seed) {
            this.seed = seed;
            return this;
        }

        /** A sensor without noise, mismatch, jitter or refractory period: the ideal model. */
        public Builder ideal() {
            this.mismatch = 0;
            this.refractoryUs = 0;
            this.backgroundRateHz = 0;
            this.hotPixels = 0;
            this.jitterUs = 0;
            return this;
        }

        /** Validates and builds. */
        public SensorConfig build() {
            return new SensorConfig(width, height, contrast, mismatch, refractoryUs, backgroundRateHz, hotPixels,
                    hotPixelRateHz, jitterUs, frameRateHz, exposureUs, fullScale, readNoiseDn, maxStepUs, seed);
        }
    }
}
