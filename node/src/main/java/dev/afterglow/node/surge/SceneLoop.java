package dev.afterglow.node.surge;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SyntheticSensor;

/**
 * A loop of synthetic events generated once: {@link #LOOP_US} of a built-in scene seen by the
 * synthetic sensor (default sensor model: threshold mismatch, background activity, hot pixels,
 * jitter), kept as event words of the packet layout without their time field plus the event times.
 * {@link PacketPlan} re-times it to any rate. Immutable after construction; shared by all senders.
 */
public final class SceneLoop {
    /** Length of the loop in sensor time. */
    public static final long LOOP_US = 1_000_000;

    private final String scene;
    private final int width;
    private final int height;
    private final long[] words;
    private final int[] timesUs;

    private SceneLoop(String scene, int width, int height, long[] words, int[] timesUs) {
        this.scene = scene;
        this.width = width;
        this.height = height;
        this.words = words;
        this.timesUs = timesUs;
    }

    /** Runs the synthetic sensor, under the scene's conditions, over {@link #LOOP_US} of {@code kind} at the given size. */
    public static SceneLoop generate(SceneKind kind, int width, int height, long seed) {
        SyntheticSensor sensor = new SyntheticSensor(kind.create(width, height, seed),
                kind.sensor(width, height).seed(seed).build());
        EventBatch batch = new EventBatch(1 << 18);
        long[] words = new long[1 << 16];
        int[] times = new int[1 << 16];
        int n = 0;
        while (sensor.timeUs() < LOOP_US - 1) {
            long t = sensor.timeUs();
            batch.reset(t);
            sensor.step(Math.min(LOOP_US - 1, t + 1000), batch);
            while (sensor.pollFrame() != null) {
                // the sensor's own frames are not part of the load
            }
            if (n + batch.size > words.length) {
                int grown = Math.max(n + batch.size, words.length * 2);
                words = java.util.Arrays.copyOf(words, grown);
                times = java.util.Arrays.copyOf(times, grown);
            }
            for (int i = 0; i < batch.size; i++) {
                // Event word of the packet layout (see EventPacketCodec) with dt = 0.
                words[n] = ((long) batch.x[i] << 32) | ((long) batch.y[i] << 48) | (batch.p[i] > 0 ? 1L << 63 : 0L);
                times[n] = (int) batch.timeUs(i);
                n++;
            }
        }
        return new SceneLoop(kind.label(), width, height, java.util.Arrays.copyOf(words, n), java.util.Arrays.copyOf(times, n));
    }

    /** Scene name. */
    public String scene() {
        return scene;
    }

    public int width() {
        return width;
    }

    public int height() {
        return height;
    }

    /** Events in the loop. */
    public int size() {
        return words.length;
    }

    /** The scene's own event rate, events per second of sensor time. */
    public double eventsPerSecond() {
        return words.length / (LOOP_US * 1e-6);
    }

    /** Event word {@code i} (packet layout, dt field zero). */
    long word(int i) {
        return words[i];
    }

    /** Time of event {@code i} in [0, {@link #LOOP_US}), non-decreasing in {@code i}. */
    int timeUs(int i) {
        return timesUs[i];
    }
}
