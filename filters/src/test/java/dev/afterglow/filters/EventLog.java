package dev.afterglow.filters;

import static org.junit.jupiter.api.Assertions.fail;

import java.util.Arrays;

/** An ordered record of events (absolute time, pixel, polarity) for comparing stage outputs. */
public final class EventLog {
    private long[] t = new long[1024];
    private int[] x = new int[1024];
    private int[] y = new int[1024];
    private byte[] p = new byte[1024];
    private int n;

    /** Appends one event. */
    public void add(long time, int ex, int ey, int pol) {
        if (n == t.length) {
            t = Arrays.copyOf(t, n * 2);
            x = Arrays.copyOf(x, n * 2);
            y = Arrays.copyOf(y, n * 2);
            p = Arrays.copyOf(p, n * 2);
        }
        t[n] = time;
        x[n] = ex;
        y[n] = ey;
        p[n] = (byte) pol;
        n++;
    }

    /** Appends the valid events of {@code batch} in order. */
    public void addAll(EventBatch batch) {
        for (int i = 0; i < batch.size; i++) {
            add(batch.timeUs(i), batch.x[i], batch.y[i], batch.p[i]);
        }
    }

    /** Appends event {@code i} of {@code stream}. */
    public void add(RandomEventStream stream, int i) {
        add(stream.t[i], stream.x[i], stream.y[i], stream.p[i]);
    }

    /** Number of events. */
    public int size() {
        return n;
    }

    /** Fails with the first difference if {@code actual} is not the same sequence as {@code expected}. */
    public static void assertSameEvents(EventLog expected, EventLog actual, String what) {
        int common = Math.min(expected.n, actual.n);
        for (int i = 0; i < common; i++) {
            if (expected.t[i] != actual.t[i] || expected.x[i] != actual.x[i] || expected.y[i] != actual.y[i]
                    || expected.p[i] != actual.p[i]) {
                fail(what + ": passed event " + i + " differs: expected " + expected.describe(i) + ", got "
                        + actual.describe(i));
            }
        }
        if (expected.n != actual.n) {
            fail(what + ": expected " + expected.n + " passed events, got " + actual.n
                    + (expected.n > common ? "; first missing " + expected.describe(common)
                            : "; first extra " + actual.describe(common)));
        }
    }

    private String describe(int i) {
        return "(x=" + x[i] + ", y=" + y[i] + ", t=" + t[i] + "us, p=" + p[i] + ")";
    }
}
