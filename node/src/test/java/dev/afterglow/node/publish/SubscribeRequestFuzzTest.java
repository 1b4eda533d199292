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
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.Combinators;
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

    @Property
    void everyRequestIsRefusedOrRendersInsideTheSensor(@ForAll("requests") Subscribe s,
            @ForAll("sides") int width, @ForAll("sides") int height) {
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
    Arbitrary<Integer> sides() {
        return Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(4, Arbitraries.integers().between(1, 64)),
                net.jqwik.api.Tuple.of(1, Arbitraries.integers().between(1, 32768)));
    }

    /** Unsigned 32-bit values, weighted towards the edges where sign and overflow bugs live. */
    private static Arbitrary<Integer> u32() {
        return Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(4, Arbitraries.integers().between(0, 80)),
                net.jqwik.api.Tuple.of(2, Arbitraries.integers().between(-64, -1)), // 2^32 - 64 .. 2^32 - 1
                net.jqwik.api.Tuple.of(1, Arbitraries.integers().between(Integer.MIN_VALUE, Integer.MIN_VALUE + 64)),
                net.jqwik.api.Tuple.of(1, Arbitraries.integers().between(Integer.MAX_VALUE - 64, Integer.MAX_VALUE)),
                net.jqwik.api.Tuple.of(1, Arbitraries.integers()));
    }

    @Provide
    Arbitrary<Subscribe> requests() {
        Arbitrary<Region> regions = Combinators.combine(u32(), u32(), u32(), u32())
                .as((x, y, w, h) -> Region.newBuilder().setX(x).setY(y).setWidth(w).setHeight(h).build());
        Arbitrary<Float> rates = Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(4, Arbitraries.floats().between(0, 1000)),
                net.jqwik.api.Tuple.of(1, Arbitraries.of(Float.NaN, Float.POSITIVE_INFINITY, Float.NEGATIVE_INFINITY, -0f, -1f, 1000.01f)),
                net.jqwik.api.Tuple.of(1, Arbitraries.floats()));
        Arbitrary<Integer> formats = Arbitraries.frequencyOf(
                net.jqwik.api.Tuple.of(4, Arbitraries.integers().between(0, 3)),
                net.jqwik.api.Tuple.of(1, Arbitraries.integers()));
        Arbitrary<Boolean> whole = Arbitraries.of(true, false);
        return Combinators.combine(regions, rates, formats, u32(), whole).as((r, rate, format, ds, all) ->
                Subscribe.newBuilder().setSensorId("s").setRateHz(rate).setFormatValue(format).setDownscale(ds)
                        .setRegion(all ? Region.getDefaultInstance() : r).build());
    }
}
