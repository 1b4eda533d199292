package dev.afterglow.proto.v1;

import com.google.protobuf.ByteString;
import java.util.List;

/** One filled-in envelope for every body type, shared by the schema tests. Values are arbitrary. */
final class SampleEnvelopes {
    private SampleEnvelopes() {
    }

    static Envelope hello() {
        return Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setHello(SensorHello.newBuilder()
                        .setSensorId("bench-left")
                        .setWidth(640)
                        .setHeight(480)
                        .setClock(ClockDescription.newBuilder()
                                .setSource("sensor-internal")
                                .setTickNs(1000)
                                .setEpochUs(1_764_650_000_000_000L))
                        .setSendsFrames(true)
                        .setContrastThreshold(0.2f))
                .build();
    }

    static Envelope events() {
        long[] dt = {0, 17, 4_000_000_000L};
        int[] x = {0, 639, 65535};
        int[] y = {0, 479, 32767};
        int[] p = {1, 0, 1};
        return Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setEvents(EventPacket.newBuilder()
                        .setSequence(42)
                        .setTimeBaseUs(9_000_000_123L)
                        .setEventCount(dt.length)
                        .setEvents(ByteString.copyFrom(DiagramEventLayout.write(dt, x, y, p)))
                        .setSensorId("bench-left"))
                .build();
    }

    static Envelope sensorFrame() {
        byte[] pixels = new byte[4 * 3 * 2];
        for (int i = 0; i < pixels.length; i++) {
            pixels[i] = (byte) (i * 11);
        }
        return Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setSensorFrame(SensorFrame.newBuilder()
                        .setSequence(7)
                        .setExposureStartUs(1_000_000)
                        .setExposureEndUs(1_010_000)
                        .setWidth(4)
                        .setHeight(3)
                        .setBitDepth(12)
                        .setPixels(ByteString.copyFrom(pixels))
                        .setSensorId("bench-left"))
                .build();
    }

    static Envelope intensityFrame() {
        return Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setIntensityFrame(IntensityFrame.newBuilder()
                        .setSensorId("bench-left")
                        .setSequence(1234)
                        .setFrameTimeUs(2_000_000)
                        .setWindowStartUs(1_966_667)
                        .setWindowEndUs(2_000_000)
                        .setFormat(PixelFormat.PIXEL_FORMAT_GRAY8)
                        .setWidth(2)
                        .setHeight(2)
                        .setRegion(Region.newBuilder().setX(100).setY(50).setWidth(4).setHeight(4))
                        .setDownscale(2)
                        .setPixels(ByteString.copyFrom(new byte[] {0, 64, (byte) 128, (byte) 255}))
                        .setProvenance(Provenance.newBuilder()
                                .setEventsApplied(15_000)
                                .addStages(StageCount.newBuilder()
                                        .setStage("refractory").setEventsIn(20_000).setEventsRemoved(3_000))
                                .addStages(StageCount.newBuilder()
                                        .setStage("background-activity").setEventsIn(17_000).setEventsRemoved(2_000))
                                .setEventsDropped(12)
                                .setPublishHostTimeNs(1_764_650_002_000_000_000L)
                                .setSensorToPublishUs(4_500)
                                .setArrivalToPublishUs(1_200)
                                .setReadoutNs(350_000)
                                .setLastSensorFrameUs(1_990_000)))
                .build();
    }

    static Envelope subscribe() {
        return Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setSubscribe(Subscribe.newBuilder()
                        .setSensorId("bench-left")
                        .setRateHz(30f)
                        .setFormat(PixelFormat.PIXEL_FORMAT_LOG_F32)
                        .setRegion(Region.newBuilder().setX(10).setY(20).setWidth(320).setHeight(240))
                        .setDownscale(4))
                .build();
    }

    static Envelope error() {
        return Envelope.newBuilder()
                .setSchemaVersion(SchemaVersion.SCHEMA_VERSION_1_VALUE)
                .setError(ErrorReport.newBuilder()
                        .setCode("unknown-sensor")
                        .setMessage("no sensor named \"bench-right\" is connected"))
                .build();
    }

    /** One envelope of each body type, in field-number order of the oneof. */
    static List<Envelope> all() {
        return List.of(hello(), events(), sensorFrame(), intensityFrame(), subscribe(), error());
    }
}
