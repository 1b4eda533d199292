package dev.afterglow.node.publish;

import java.util.function.Supplier;

/**
 * A frame ready to publish: valid only during {@link FramePublisher#publish} (its arrays belong
 * to the sensor's pipeline and are reused), on the pipeline thread.
 *
 * @param sensorId sensor
 * @param sequence frame number, +1 per published frame of this sensor
 * @param frameIndex index on the sensor's frame-rate grid, or -1 for a frame read out off the grid
 * @param frameTimeUs sensor time the frame shows
 * @param windowStartUs start of the sensor-time window since the previous frame
 * @param width sensor width
 * @param height sensor height
 * @param sensorRateHz the sensor's frame rate when read out
 * @param log log intensity, width*height
 * @param gray8 tone-mapped 8-bit image, computed on first use
 * @param provenance provenance without the publish-time fields
 * @param frameHostUs host monotonic time (us) the frame's sensor time maps to
 * @param newestArrivalUs host monotonic arrival (us) of the newest packet applied in the window; 0 if none
 * @param readoutStartNanos host monotonic time (ns) the readout started
 * @param readoutNanos time spent reading out
 */
public record FrameData(
        String sensorId,
        long sequence,
        long frameIndex,
        long frameTimeUs,
        long windowStartUs,
        int width,
        int height,
        double sensorRateHz,
        float[] log,
        Supplier<byte[]> gray8,
        dev.afterglow.proto.v1.Provenance provenance,
        long frameHostUs,
        long newestArrivalUs,
        long readoutStartNanos,
        long readoutNanos) {
}
