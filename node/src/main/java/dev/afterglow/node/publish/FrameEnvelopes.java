package dev.afterglow.node.publish;

import com.google.protobuf.UnsafeByteOperations;
import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.IntensityFrame;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Provenance;
import dev.afterglow.proto.v1.Region;

/**
 * Builds the envelope of one published frame: the region and format asked for, and the
 * provenance completed with the publish-time fields. One builder for every way frames leave the
 * node (subscriber connections, the frame topic), so their frames are the same message.
 */
public final class FrameEnvelopes {
    private FrameEnvelopes() {
    }

    /** The whole frame in {@code format}, box-downscaled by {@code downscale} (1: full size). */
    public static Envelope whole(FrameData f, PixelFormat format, int downscale, long publishWallNanos, long nowMonotonicUs) {
        return build(f, new Subscription.RenderKey(format, 0, 0, f.width(), f.height(), downscale), publishWallNanos,
                nowMonotonicUs);
    }

    static Envelope build(FrameData f, Subscription.RenderKey k, long publishWallNanos, long nowMonotonicUs) {
        byte[] pixels = k.format() == PixelFormat.PIXEL_FORMAT_LOG_F32
                ? RegionRenderer.logF32(f.log(), f.width(), k)
                : RegionRenderer.gray(f.gray8().get(), f.width(), f.height(), k);
        Provenance.Builder p = f.provenance().toBuilder()
                .setPublishHostTimeNs(publishWallNanos)
                .setSensorToPublishUs(nowMonotonicUs - f.frameHostUs())
                .setReadoutNs(f.readoutNanos());
        if (f.newestArrivalUs() > 0) {
            p.setArrivalToPublishUs(nowMonotonicUs - f.newestArrivalUs());
        }
        IntensityFrame frame = IntensityFrame.newBuilder()
                .setSensorId(f.sensorId())
                .setSequence(f.sequence())
                .setFrameTimeUs(f.frameTimeUs())
                .setWindowStartUs(f.windowStartUs())
                .setWindowEndUs(f.frameTimeUs())
                .setFormat(k.format())
                .setWidth(k.width() / k.downscale())
                .setHeight(k.height() / k.downscale())
                .setRegion(Region.newBuilder().setX(k.x()).setY(k.y()).setWidth(k.width()).setHeight(k.height()))
                .setDownscale(k.downscale())
                .setPixels(UnsafeByteOperations.unsafeWrap(pixels))
                .setProvenance(p)
                .build();
        return Envelope.newBuilder().setSchemaVersion(Envelopes.SCHEMA_VERSION).setIntensityFrame(frame).build();
    }
}
