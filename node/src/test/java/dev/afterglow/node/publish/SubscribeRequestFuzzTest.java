package dev.afterglow.node.publish;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.fuzz.FuzzTarget;
import dev.afterglow.proto.v1.PixelFormat;
import dev.afterglow.proto.v1.Region;
import dev.afterglow.proto.v1.Subscribe;
import dev.afterglow.filters.fuzz.FuzzInputs;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * Fuzz target for subscribe validation ({@link SubscribeRequest#resolve}): region fields, downscale
 * and format as any unsigned 32-bit value (near 0, near the sensor's edge, near 2^31 and 2^32),
 * rates including NaN and infinities, sensors of any size. A request is either refused with a
 * message or resolved to a region inside the sensor that the renderer reads without going out of
 * bounds; the decision agrees with a reference written with unsigned arithmetic in longs.
 */
@FuzzTarget
class SubscribeRequestFuzzTest {

    record Case(Subscribe request, int width, int height) {
    }

    @Property
    void everyRequestIsRefusedOrRendersInsideTheSensor(@ForAll("cases") Case c) {
        Subscribe s = c.request();
        int width = c.width();
        int height = c.height();
        SubscribeRequest.Outcome outcome = SubscribeRequest.resolve(s, width, height);
        boolean expected = reference(s, width, height);
        if (outcome.request() == null) {
            assertNotNull(outcome.problem());
            assertFalse(outcome.problem().isBlank());
            assertFalse(expected, "refused a valid request: " + outcome.problem());
            return;
        }
        assertNull(outcome.problem());
        assertTrue(expected, "accepted an invalid request");
        SubscribeRequest r = outcome.request();
        assertTrue(r.x() >= 0 && r.y() >= 0 && r.width() >= 1 && r.height() >= 1);
        assertTrue((long) r.x() + r.width() <= width && (long) r.y() + r.height() <= height);
        assertTrue(r.downscale() >= 1 && r.downscale() <= 16);
        assertTrue(r.width() / r.downscale() >= 1 && r.height() / r.downscale() >= 1);
        if ((long) width * height <= 1 << 16) { // render small sensors for real: no index goes astray
            Subscription.RenderKey key = new Subscription.RenderKey(r.format(), r.x(), r.y(), r.width(), r.height(), r.downscale());
            byte[] gray = RegionRenderer.gray(new byte[width * height], width, height, key);
            assertEquals((r.width() / r.downscale()) * (r.height() / r.downscale()), gray.length == width * height
                    && r.width() == width && r.height() == height && r.downscale() == 1 ? width * height : gray.length);
            byte[] f32 = RegionRenderer.logF32(new float[width * height], width, key);
            assertEquals(4 * (r.width() / r.downscale()) * (r.height() / r.downscale()), f32.length);
        }
    }

    /** What a valid request is, from the schema's comments: unsigned fields, all-zero region = whole sensor. */
    private static boolean reference(Subscribe s, int width, int height) {
        float rate = s.getRateHz();
        if (!(rate >= 0 && rate <= 1000)) {
            return false;
        }
        long ds = s.getDownscale() == 0 ? 1 : s.getDownscale() & 0xFFFFFFFFL;
        if (ds > 16) {
            return false;
        }
        int f = s.getFormatValue();
        if (f != 0 && f != 1 && f != 2) {
            return false;
        }
        Region r = s.getRegion();
        long w = r.getWidth() & 0xFFFFFFFFL;
        long h = r.getHeight() & 0xFFFFFFFFL;
        long x = r.getX() & 0xFFFFFFFFL;
        long y = r.getY() & 0xFFFFFFFFL;
        if (w == 0 && h == 0) {
            x = 0;
            y = 0;
            w = width;
            h = height;
        }
        return w >= ds && h >= ds && x + w <= width && y + h <= height;
    }

    @Provide
    Arbitrary<Case> cases() {
        return FuzzInputs.from(r -> {
            int width = r.nextInt(5) < 4 ? 1 + r.nextInt(64) : 1 + r.nextInt(32768);
            int height = r.nextInt(5) < 4 ? 1 + r.nextInt(64) : 1 + r.nextInt(32768);
            Region region = r.nextInt(4) == 0 ? Region.getDefaultInstance()
                    : Region.newBuilder().setX(u32(r, width)).setY(u32(r, height)).setWidth(u32(r, width)).setHeight(u32(r, height)).build();
            float rate = switch (r.nextInt(6)) {
                case 0 -> FuzzInputs.oneOf(r, Float.NaN, Float.POSITIVE_INFINITY, Float.NEGATIVE_INFINITY, -0f, -1f, 1000.01f, 1000f);
                case 1 -> Float.intBitsToFloat(r.nextInt());
                default -> r.nextFloat() * 1000;
            };
            int format = r.nextInt(5) == 0 ? r.nextInt() : r.nextInt(4);
            Subscribe s = Subscribe.newBuilder().setSensorId("s").setRateHz(rate).setFormatValue(format)
                    .setDownscale(u32(r, 17)).setRegion(region).build();
            return new Case(s, width, height);
        });
    }

    /** An unsigned 32-bit value near 0, near {@code edge}, or near 2^31 and 2^32 (where sign and overflow bugs live). */
    private static int u32(java.util.Random r, int edge) {
        return FuzzInputs.near(r, 40, 0, edge, Integer.MIN_VALUE, Integer.MAX_VALUE, -1);
    }
}
