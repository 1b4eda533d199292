package dev.afterglow.node.publish;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Region;
import dev.afterglow.proto.v1.Subscribe;
import org.junit.jupiter.api.Test;

class SubscribeRequestTest {

    private static SubscribeRequest.Outcome resolve(Subscribe.Builder b) {
        return SubscribeRequest.resolve(b.setSensorId("s").build(), 640, 480);
    }

    @Test
    void shouldResolveDefaultsToTheWholeSensorIn8Bits() {
        SubscribeRequest r = resolve(Subscribe.newBuilder()).request();
        assertEquals(new SubscribeRequest(PixelFormat.PIXEL_FORMAT_GRAY8, 0, 0, 640, 480, 1, 0), r);
    }

    @Test
    void shouldRefuseRegionFieldsNear2To32InsteadOfReadingThemNegative() {
        for (int bad : new int[] {-1, -16, Integer.MIN_VALUE}) { // 2^32 - 1, 2^32 - 16, 2^31 as uint32
            SubscribeRequest.Outcome x = resolve(Subscribe.newBuilder().setRegion(Region.newBuilder().setX(bad).setWidth(16).setHeight(16)));
            assertNull(x.request());
            assertTrue(x.problem().contains("outside the sensor"), x.problem());
            SubscribeRequest.Outcome y = resolve(Subscribe.newBuilder().setRegion(Region.newBuilder().setY(bad).setWidth(16).setHeight(16)));
            assertNull(y.request());
            SubscribeRequest.Outcome w = resolve(Subscribe.newBuilder().setRegion(Region.newBuilder().setX(8).setWidth(bad).setHeight(16)));
            assertNull(w.request(), "width " + Integer.toUnsignedString(bad));
        }
    }

    @Test
    void shouldRefuseHugeDownscaleAndUnknownFormat() {
        assertNotNull(resolve(Subscribe.newBuilder().setDownscale(-1)).problem());
        assertNotNull(resolve(Subscribe.newBuilder().setDownscale(17)).problem());
        assertNotNull(resolve(Subscribe.newBuilder().setFormatValue(99)).problem());
        assertNotNull(resolve(Subscribe.newBuilder().setRateHz(Float.NaN)).problem());
        assertNotNull(resolve(Subscribe.newBuilder().setRateHz(-1)).problem());
    }

    @Test
    void shouldAcceptARegionThatEndsAtTheSensorEdge() {
        SubscribeRequest r = resolve(Subscribe.newBuilder().setRegion(Region.newBuilder().setX(600).setY(400).setWidth(40).setHeight(80))
                .setDownscale(4)).request();
        assertEquals(new SubscribeRequest(PixelFormat.PIXEL_FORMAT_GRAY8, 600, 400, 40, 80, 4, 0), r);
    }
}
