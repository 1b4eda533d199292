package dev.afterglow.node.publish;

import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Region;
import dev.afterglow.proto.v1.Subscribe;

/**
 * A {@link Subscribe} with its defaults resolved (whole sensor, no downscale, 8-bit) and every
 * field checked against the sensor: region fields are unsigned 32-bit on the wire and are read as
 * such, so a value near 2^32 is out of range rather than negative. Pure; safe from any thread.
 *
 * @param format pixel format
 * @param x region column
 * @param y region row
 * @param width region width
 * @param height region height
 * @param downscale box-downscale factor, 1..16
 * @param rateHz frames per second wanted, 0: every frame
 */
public record SubscribeRequest(PixelFormat format, int x, int y, int width, int height, int downscale, double rateHz) {
    /** Largest downscale factor. */
    public static final int MAX_DOWNSCALE = 16;

    /** A resolved request, or what is wrong with it. */
    public record Outcome(SubscribeRequest request, String problem) {
    }

    /** Resolves and checks {@code s} for a sensor of {@code sensorWidth} x {@code sensorHeight}. */
    public static Outcome resolve(Subscribe s, int sensorWidth, int sensorHeight) {
        float rate = s.getRateHz();
        if (!(rate >= 0 && rate <= 1000)) {
            return problem("rate_hz=" + rate + " outside [0, 1000]");
        }
        long ds = s.getDownscale() == 0 ? 1 : Integer.toUnsignedLong(s.getDownscale());
        if (ds > MAX_DOWNSCALE) {
            return problem("downscale=" + ds + " > " + MAX_DOWNSCALE);
        }
        PixelFormat format = switch (s.getFormat()) {
            case PIXEL_FORMAT_UNSPECIFIED, PIXEL_FORMAT_GRAY8 -> PixelFormat.PIXEL_FORMAT_GRAY8;
            case PIXEL_FORMAT_LOG_F32 -> PixelFormat.PIXEL_FORMAT_LOG_F32;
            default -> null;
        };
        if (format == null) {
            return problem("format " + s.getFormatValue() + " unknown");
        }
        Region r = s.getRegion();
        boolean whole = r.getWidth() == 0 && r.getHeight() == 0;
        long x = whole ? 0 : Integer.toUnsignedLong(r.getX());
        long y = whole ? 0 : Integer.toUnsignedLong(r.getY());
        long w = whole ? sensorWidth : Integer.toUnsignedLong(r.getWidth());
        long h = whole ? sensorHeight : Integer.toUnsignedLong(r.getHeight());
        if (w < 1 || h < 1 || x + w > sensorWidth || y + h > sensorHeight) {
            return problem("region " + x + "," + y + " " + w + "x" + h + " outside the sensor's " + sensorWidth + "x" + sensorHeight);
        }
        if (w / ds < 1 || h / ds < 1) {
            return problem("downscale=" + ds + " larger than the region " + w + "x" + h);
        }
        return new Outcome(new SubscribeRequest(format, (int) x, (int) y, (int) w, (int) h, (int) ds, rate), null);
    }

    private static Outcome problem(String text) {
        return new Outcome(null, text);
    }
}
