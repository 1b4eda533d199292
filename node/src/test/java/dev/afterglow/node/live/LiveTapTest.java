package dev.afterglow.node.live;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.publish.FrameData;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.Provenance;
import io.netty.buffer.ByteBuf;
import io.netty.channel.embedded.EmbeddedChannel;
import io.netty.handler.codec.http.websocketx.BinaryWebSocketFrame;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.Test;

/**
 * The tap's contract with a hand-driven clock and in-memory channels: nothing is collected while
 * nobody watches, each viewer gets at most its fps, the activity it gets covers everything since
 * the frame it was last shown, and a viewer that is not writable is skipped and counted.
 */
class LiveTapTest {
    private static final int W = 4;
    private static final int H = 2;
    private static final long MS = 1_000_000L;
    private static final byte[] GRAY = {0, 10, 20, 30, 40, 50, 60, (byte) 255};

    private final long[] now = {0};
    private final NodeClock clock = new NodeClock() {
        @Override
        public long monotonicNanos() {
            return now[0];
        }

        @Override
        public long wallNanos() {
            return now[0];
        }
    };
    private final Counters counters = new Counters();
    private final LiveTap tap = new LiveTap(W, H, clock, counters);
    private final EmbeddedChannel a = new EmbeddedChannel();
    private final EmbeddedChannel b = new EmbeddedChannel();

    @AfterEach
    void close() {
        a.finishAndReleaseAll();
        b.finishAndReleaseAll();
    }

    private static EventBatch events(int... xyp) {
        EventBatch batch = new EventBatch(16);
        batch.reset(0);
        for (int i = 0; i < xyp.length; i += 3) {
            batch.add(xyp[i], xyp[i + 1], i, xyp[i + 2]);
        }
        return batch;
    }

    private static FrameData frame(long seq) {
        return new FrameData("cam", seq, seq, seq * 20_000, (seq - 1) * 20_000, W, H, 50, new float[W * H],
                () -> GRAY, Provenance.getDefaultInstance(), 0, 0, 0, 0);
    }

    /** A decoded message, read field by field at the offsets documented in {@link LiveFrameCodec}. */
    private record Message(long seq, long timeUs, int w, int h, long events, byte[] gray, byte[] activity) {
    }

    private static Message take(EmbeddedChannel ch) {
        BinaryWebSocketFrame f = ch.readOutbound();
        if (f == null) {
            return null;
        }
        ByteBuf content = f.content();
        byte[] bytes = new byte[content.readableBytes()];
        content.readBytes(bytes);
        f.release();
        ByteBuffer v = ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN);
        assertEquals('A', bytes[0]);
        assertEquals('G', bytes[1]);
        assertEquals('L', bytes[2]);
        assertEquals('V', bytes[3]);
        assertEquals(1, v.getShort(4));
        assertEquals(1, v.getShort(6)); // a 4x2 sensor fits: factor 1
        int w = v.getShort(24);
        int h = v.getShort(26);
        assertEquals(32 + 2 * w * h, bytes.length);
        byte[] gray = new byte[w * h];
        byte[] act = new byte[w * h];
        System.arraycopy(bytes, 32, gray, 0, w * h);
        System.arraycopy(bytes, 32 + w * h, act, 0, w * h);
        return new Message(v.getLong(8), v.getLong(16), w, h, v.getInt(28) & 0xFFFFFFFFL, gray, act);
    }

    @Test
    void shouldCollectNothingWhileNobodyWatches() {
        assertFalse(tap.watching());
        tap.accumulate(events(0, 0, +1, 1, 0, +1));
        tap.onFrame(frame(1));
        LiveViewer v = new LiveViewer(a, 10, tap.raster());
        tap.add(v);
        assertTrue(tap.watching());
        tap.accumulate(events(3, 1, -1));
        tap.onFrame(frame(2));
        Message m = take(a);
        assertNotNull(m);
        assertEquals(2, m.seq());
        assertEquals(40_000, m.timeUs());
        assertEquals(W, m.w());
        assertEquals(H, m.h());
        assertArrayEquals(GRAY, m.gray());
        // Only the event seen while watching.
        assertArrayEquals(new byte[] {0, 0, 0, 0, 0, 0, 0, -1}, m.activity());
        assertEquals(1, m.events());
        tap.remove(v);
        assertFalse(tap.watching());
        // Events while nobody watches are not carried over to the next viewer.
        tap.accumulate(events(0, 0, +1));
        tap.onFrame(frame(3));
        tap.add(new LiveViewer(b, 10, tap.raster()));
        tap.onFrame(frame(4));
        Message fresh = take(b);
        assertArrayEquals(new byte[W * H], fresh.activity());
        assertEquals(0, fresh.events());
    }

    @Test
    void shouldSendAtMostFpsAndCarryActivitySinceTheLastShownFrame() {
        tap.add(new LiveViewer(a, 10, tap.raster())); // one frame per 100 ms
        tap.accumulate(events(0, 0, +1));
        tap.onFrame(frame(1));
        assertArrayEquals(new byte[] {1, 0, 0, 0, 0, 0, 0, 0}, take(a).activity());
        now[0] = 50 * MS;
        tap.accumulate(events(1, 0, -1, 1, 0, -1));
        tap.onFrame(frame(2));
        assertNull(take(a), "second frame within 100 ms");
        now[0] = 100 * MS;
        tap.accumulate(events(0, 0, +1, 2, 1, +1));
        tap.onFrame(frame(3));
        Message m = take(a);
        assertEquals(3, m.seq());
        // Frames 2 and 3 together: (0,0) +1, (1,0) -2, (2,1) +1.
        assertArrayEquals(new byte[] {1, -2, 0, 0, 0, 0, 1, 0}, m.activity());
        assertEquals(4, m.events());
        assertEquals(2, counters.get(NodeCounter.LIVE_FRAMES_SENT));
        assertEquals(0, counters.get(NodeCounter.LIVE_FRAMES_SKIPPED));
    }

    @Test
    void shouldNotSendTwoFramesBackToBackAfterAStall() {
        tap.add(new LiveViewer(a, 10, tap.raster()));
        tap.onFrame(frame(1));
        take(a);
        now[0] = 350 * MS; // the pipeline stalled: three turns missed
        tap.onFrame(frame(2));
        assertNotNull(take(a));
        now[0] = 360 * MS; // a burst of frames as the pipeline catches up
        tap.onFrame(frame(3));
        assertNull(take(a));
        now[0] = 399 * MS;
        tap.onFrame(frame(4));
        assertNull(take(a));
        now[0] = 400 * MS; // half an interval after the late frame
        tap.onFrame(frame(5));
        assertEquals(5, take(a).seq());
        now[0] = 500 * MS; // back on the 100 ms grid
        tap.onFrame(frame(6));
        assertEquals(6, take(a).seq());
    }

    @Test
    void shouldSkipAndCountAViewerThatIsNotWritableThenSendTheLatest() {
        tap.add(new LiveViewer(a, 10, tap.raster()));
        tap.onFrame(frame(1));
        take(a);
        a.unsafe().outboundBuffer().setUserDefinedWritability(1, false);
        assertFalse(a.isWritable());
        now[0] = 100 * MS;
        tap.accumulate(events(3, 0, +1));
        tap.onFrame(frame(2));
        assertNull(take(a));
        assertEquals(1, counters.get(NodeCounter.LIVE_FRAMES_SKIPPED));
        a.unsafe().outboundBuffer().setUserDefinedWritability(1, true);
        now[0] = 150 * MS;
        tap.accumulate(events(3, 0, +1));
        tap.onFrame(frame(3));
        assertNull(take(a), "the skipped turn still counts for the rate");
        now[0] = 200 * MS;
        tap.onFrame(frame(4));
        Message m = take(a);
        assertEquals(4, m.seq());
        assertArrayEquals(new byte[] {0, 0, 0, 2, 0, 0, 0, 0}, m.activity());
        assertEquals(2, counters.get(NodeCounter.LIVE_FRAMES_SENT));
    }

    @Test
    void shouldKeepActivityPerViewerWhenRatesDiffer() {
        tap.add(new LiveViewer(a, 10, tap.raster())); // every 100 ms
        tap.add(new LiveViewer(b, 5, tap.raster())); // every 200 ms
        tap.onFrame(frame(1));
        take(a);
        take(b);
        now[0] = 100 * MS;
        tap.accumulate(events(0, 1, -1));
        tap.onFrame(frame(2));
        assertArrayEquals(new byte[] {0, 0, 0, 0, -1, 0, 0, 0}, take(a).activity());
        assertNull(take(b));
        now[0] = 200 * MS;
        tap.accumulate(events(1, 1, +1));
        tap.onFrame(frame(3));
        assertArrayEquals(new byte[] {0, 0, 0, 0, 0, 1, 0, 0}, take(a).activity());
        Message slow = take(b);
        assertArrayEquals(new byte[] {0, 0, 0, 0, -1, 1, 0, 0}, slow.activity());
        assertEquals(2, slow.events());
    }
}
