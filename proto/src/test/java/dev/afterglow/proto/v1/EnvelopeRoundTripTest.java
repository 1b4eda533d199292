package dev.afterglow.proto.v1;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.google.protobuf.InvalidProtocolBufferException;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/** Every envelope body survives serialization, alone and in a length-delimited stream. */
class EnvelopeRoundTripTest {

    static Stream<Envelope> samples() {
        return SampleEnvelopes.all().stream();
    }

    @ParameterizedTest
    @MethodSource("samples")
    void shouldRoundTripEachBodyThroughByteArray(Envelope sent) throws InvalidProtocolBufferException {
        Envelope received = Envelope.parseFrom(sent.toByteArray());

        assertEquals(sent, received);
        assertEquals(sent.getBodyCase(), received.getBodyCase());
        assertNotEquals(Envelope.BodyCase.BODY_NOT_SET, received.getBodyCase());
        assertEquals(SchemaVersion.SCHEMA_VERSION_1_VALUE, received.getSchemaVersion());
    }

    @Test
    void shouldKeepKeyFieldsOfEachBody() throws InvalidProtocolBufferException {
        SensorHello hello = Envelope.parseFrom(SampleEnvelopes.hello().toByteArray()).getHello();
        assertEquals("bench-left", hello.getSensorId());
        assertEquals(640, hello.getWidth());
        assertEquals(480, hello.getHeight());
        assertEquals(1000, hello.getClock().getTickNs());
        assertEquals(1_764_650_000_000_000L, hello.getClock().getEpochUs());
        assertEquals(0.2f, hello.getContrastThreshold());

        EventPacket events = Envelope.parseFrom(SampleEnvelopes.events().toByteArray()).getEvents();
        assertEquals(42, events.getSequence());
        assertEquals(9_000_000_123L, events.getTimeBaseUs());
        assertEquals(3, events.getEventCount());
        assertArrayEquals(SampleEnvelopes.events().getEvents().getEvents().toByteArray(), events.getEvents().toByteArray());

        SensorFrame frame = Envelope.parseFrom(SampleEnvelopes.sensorFrame().toByteArray()).getSensorFrame();
        assertEquals(12, frame.getBitDepth());
        assertEquals(1_010_000, frame.getExposureEndUs());
        assertEquals(4 * 3 * 2, frame.getPixels().size());

        IntensityFrame out = Envelope.parseFrom(SampleEnvelopes.intensityFrame().toByteArray()).getIntensityFrame();
        assertEquals(1234, out.getSequence());
        assertEquals(PixelFormat.PIXEL_FORMAT_GRAY8, out.getFormat());
        assertEquals(100, out.getRegion().getX());
        assertEquals(2, out.getDownscale());
        assertEquals((byte) 255, out.getPixels().byteAt(3));
        Provenance provenance = out.getProvenance();
        assertEquals(15_000, provenance.getEventsApplied());
        assertEquals(12, provenance.getEventsDropped());
        assertEquals(1_764_650_002_000_000_000L, provenance.getPublishHostTimeNs());
        assertEquals(4_500, provenance.getSensorToPublishUs());
        assertEquals(350_000, provenance.getReadoutNs());
        assertEquals(2, provenance.getStagesCount());
        assertEquals("background-activity", provenance.getStages(1).getStage());
        assertEquals(2_000, provenance.getStages(1).getEventsRemoved());

        Subscribe subscribe = Envelope.parseFrom(SampleEnvelopes.subscribe().toByteArray()).getSubscribe();
        assertEquals(30f, subscribe.getRateHz());
        assertEquals(PixelFormat.PIXEL_FORMAT_LOG_F32, subscribe.getFormat());
        assertEquals(Region.newBuilder().setX(10).setY(20).setWidth(320).setHeight(240).build(), subscribe.getRegion());
        assertEquals(4, subscribe.getDownscale());

        ErrorReport error = Envelope.parseFrom(SampleEnvelopes.error().toByteArray()).getError();
        assertEquals("unknown-sensor", error.getCode());
    }

    @Test
    void shouldReadBackSeveralDelimitedEnvelopesInOrder() throws IOException {
        List<Envelope> sent = new ArrayList<>(SampleEnvelopes.all());
        sent.addAll(SampleEnvelopes.all()); // twice, so equal bodies follow each other at a distance
        sent.add(Envelope.getDefaultInstance()); // an empty message has a zero-length frame
        ByteArrayOutputStream stream = new ByteArrayOutputStream();
        for (Envelope e : sent) {
            e.writeDelimitedTo(stream);
        }

        ByteArrayInputStream in = new ByteArrayInputStream(stream.toByteArray());
        List<Envelope> received = new ArrayList<>();
        Envelope next;
        while ((next = Envelope.parseDelimitedFrom(in)) != null) {
            received.add(next);
        }

        assertEquals(sent, received);
        assertEquals(Envelope.BodyCase.INTENSITY_FRAME, received.get(3).getBodyCase());
        assertEquals(1234, received.get(9).getIntensityFrame().getSequence());
        assertEquals(Envelope.BodyCase.BODY_NOT_SET, received.get(12).getBodyCase());
        assertNull(Envelope.parseDelimitedFrom(in), "end of stream reads as null");
    }

    @Test
    void shouldPrefixEachDelimitedEnvelopeWithItsLengthOnly() throws IOException {
        // Protobuf documentation, "Encoding": a delimited stream is a varint length then the
        // message bytes, nothing else. So the stream is the concatenation of prefix + body,
        // and a body under 128 bytes has a one-byte prefix equal to its length.
        ByteArrayOutputStream stream = new ByteArrayOutputStream();
        ByteArrayOutputStream expected = new ByteArrayOutputStream();
        for (Envelope e : List.of(SampleEnvelopes.hello(), SampleEnvelopes.subscribe(), SampleEnvelopes.error())) {
            byte[] body = e.toByteArray();
            assertTrue(body.length < 128, "sample must stay under 128 bytes for a one-byte prefix");
            e.writeDelimitedTo(stream);
            expected.write(body.length);
            expected.write(body);
        }
        assertArrayEquals(expected.toByteArray(), stream.toByteArray());
    }
}
