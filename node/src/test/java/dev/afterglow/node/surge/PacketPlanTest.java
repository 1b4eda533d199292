package dev.afterglow.node.surge;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.synth.SceneKind;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Re-timing the scene loop into packets, checked event by event against the formula written out
 * naively here: event i at loop time t_i goes to t' = floor(t_i · spans · spanUs / LOOP_US), in span
 * t' / spanUs with dt = t' mod spanUs, pixel and polarity unchanged; the packets decode with the
 * packet layout's reader.
 */
class PacketPlanTest {
    private static final int W = 64;
    private static final int H = 48;
    private static SceneLoop loop;

    @BeforeAll
    static void generate() {
        loop = SceneLoop.generate(SceneKind.PARCEL_LINE, W, H, 7);
    }

    @Test
    void shouldKeepEveryEventAtItsStretchedTime() {
        for (double rate : new double[] {5_000, 120_000, 3_000_000, RateList.MAX}) {
            for (long spanUs : new long[] {100, 1000, 7000}) {
                check(PacketPlan.of(loop, rate, spanUs), spanUs, rate);
            }
        }
    }

    private static void check(PacketPlan plan, long spanUs, double rate) {
        String what = "rate " + rate + " span " + spanUs;
        long stretch = (long) plan.spans() * spanUs;
        EventPacketCodec codec = new EventPacketCodec(W, H);
        EventBatch batch = new EventBatch(loop.size());
        DecodeResult result = new DecodeResult();
        ByteBuffer bytes = ByteBuffer.wrap(plan.bytes()).order(ByteOrder.LITTLE_ENDIAN);
        int i = 0;
        int previousSpan = -1;
        for (int j = 0; j < plan.filledSpans(); j++) {
            int span = plan.spanOf(j);
            assertTrue(span > previousSpan && span < plan.spans(), what);
            previousSpan = span;
            int from = plan.firstEvent(j);
            int to = plan.firstEvent(j + 1);
            assertEquals(i, from, what);
            long baseUs = span * spanUs;
            codec.decode(bytes.slice(from * 8, (to - from) * 8).order(ByteOrder.LITTLE_ENDIAN), to - from, baseUs, batch, result);
            assertEquals(to - from, result.decoded, what);
            for (int e = 0; e < batch.size; e++, i++) {
                long expectedUs = (long) loop.timeUs(i) * stretch / SceneLoop.LOOP_US;
                assertEquals(expectedUs, batch.timeUs(e), what + " event " + i);
                assertTrue(batch.t[e] < spanUs, what);
                long word = loop.word(i);
                assertEquals((int) (word >>> 32) & 0xFFFF, batch.x[e], what);
                assertEquals((int) (word >>> 48) & 0x7FFF, batch.y[e], what);
                assertEquals(word < 0 ? 1 : -1, batch.p[e], what);
            }
        }
        assertEquals(loop.size(), i, what);
        // Rounding the cycle to whole spans moves it by at most half a span.
        double density = Double.isInfinite(rate) ? RateList.MAX_RATE : rate;
        double cycleUs = SceneLoop.LOOP_US * loop.eventsPerSecond() / density;
        assertEquals(loop.size() / (stretch * 1e-6), plan.eventsPerSecond(), 1e-9 * plan.eventsPerSecond(), what);
        if (cycleUs >= spanUs) {
            assertTrue(Math.abs(stretch - cycleUs) <= spanUs / 2.0 + 1e-6, what + ": cycle " + stretch + " vs " + cycleUs);
        }
    }

    @Test
    void shouldGenerateTimeOrderedLoopInsideItsLength() {
        assertTrue(loop.size() > 10_000, "events " + loop.size());
        for (int i = 0; i < loop.size(); i++) {
            assertTrue(loop.timeUs(i) >= 0 && loop.timeUs(i) < SceneLoop.LOOP_US);
            if (i > 0) {
                assertTrue(loop.timeUs(i) >= loop.timeUs(i - 1), "event " + i);
            }
        }
    }
}
