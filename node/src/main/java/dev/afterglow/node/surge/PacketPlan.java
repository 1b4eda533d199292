package dev.afterglow.node.surge;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;

/**
 * A {@link SceneLoop} re-timed to an offered rate and cut into packets, encoded once so that
 * sending only writes a header before the stored bytes.
 *
 * <p>Re-timing stretches or compresses the loop's sensor time by one factor, so that the loop's
 * events fill {@code spans} packet spans of {@code spanUs} each at the asked rate (the span count is
 * rounded to a whole number, which moves the rate by less than half a span per loop; see
 * {@link #eventsPerSecond()}). Every event is kept, in its order, so the denoise stages see the
 * scene's structure, only faster or slower. An event at loop time {@code t} moves to
 * {@code t' = floor(t · spans · spanUs / LOOP_US)}, falls into span {@code t' / spanUs} and is stored
 * with {@code dt = t' mod spanUs} relative to its span's start, in the 8-byte packet layout.
 * Repeating the cycle with the time base moved by {@code spans · spanUs} per pass keeps sensor
 * time increasing.
 *
 * <p>Immutable; shared by all senders of a step.
 */
public final class PacketPlan {
    private final long spanUs;
    private final int spans;
    private final byte[] events;
    private final int[] spanIndex;
    private final int[] spanFirst;
    private final double eventsPerSecond;

    private PacketPlan(long spanUs, int spans, byte[] events, int[] spanIndex, int[] spanFirst, double eventsPerSecond) {
        this.spanUs = spanUs;
        this.spans = spans;
        this.events = events;
        this.spanIndex = spanIndex;
        this.spanFirst = spanFirst;
        this.eventsPerSecond = eventsPerSecond;
    }

    /**
     * Re-times {@code loop} to {@code rate} events per second of sensor time ({@link RateList#MAX}:
     * {@link RateList#MAX_RATE}) in spans of {@code spanUs}.
     */
    public static PacketPlan of(SceneLoop loop, double rate, long spanUs) {
        double density = Double.isInfinite(rate) ? RateList.MAX_RATE : rate;
        int size = loop.size();
        if (size == 0) {
            throw new IllegalArgumentException("the scene loop has no events");
        }
        double cycleUs = SceneLoop.LOOP_US * loop.eventsPerSecond() / density;
        long spanCount = Math.max(1, Math.round(cycleUs / spanUs));
        if (spanCount > Integer.MAX_VALUE) {
            throw new IllegalArgumentException("rate " + rate + " too low for " + spanUs + " us packets");
        }
        long stretch = spanCount * spanUs; // cycle length in microseconds
        byte[] bytes = new byte[size * 8];
        ByteBuffer out = ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN);
        int[] index = new int[Math.min(size, (int) spanCount)];
        int[] first = new int[index.length + 1];
        int used = 0;
        long currentSpan = -1;
        for (int i = 0; i < size; i++) {
            long t = (long) loop.timeUs(i) * stretch / SceneLoop.LOOP_US;
            long span = t / spanUs;
            if (span != currentSpan) {
                index[used] = (int) span;
                first[used] = i;
                used++;
                currentSpan = span;
            }
            out.putLong(i * 8, loop.word(i) | (t - span * spanUs));
        }
        first[used] = size;
        return new PacketPlan(spanUs, (int) spanCount, bytes, java.util.Arrays.copyOf(index, used),
                java.util.Arrays.copyOf(first, used + 1), size / (stretch * 1e-6));
    }

    /** Sensor time per span (packet), microseconds. */
    public long spanUs() {
        return spanUs;
    }

    /** Spans in one cycle of the loop. */
    public int spans() {
        return spans;
    }

    /** Events per second of sensor time when every span is sent once per {@code spanUs}. */
    public double eventsPerSecond() {
        return eventsPerSecond;
    }

    /** The encoded events, grouped by span; read only. */
    byte[] bytes() {
        return events;
    }

    /** Number of spans that hold events. */
    int filledSpans() {
        return spanIndex.length;
    }

    /** Span index (0 .. spans-1) of the {@code j}-th filled span. */
    int spanOf(int j) {
        return spanIndex[j];
    }

    /** First event of the {@code j}-th filled span; {@code firstEvent(j + 1)} ends it. */
    int firstEvent(int j) {
        return spanFirst[j];
    }

    /** The filled span at or after span {@code span} (binary search); {@link #filledSpans()} if none. */
    int filledAtOrAfter(int span) {
        int lo = 0;
        int hi = spanIndex.length;
        while (lo < hi) {
            int mid = (lo + hi) >>> 1;
            if (spanIndex[mid] < span) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        return lo;
    }
}
