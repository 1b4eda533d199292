package dev.afterglow.filters.bench;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.codec.EventPacketCodec;
import java.nio.ByteBuffer;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;

/**
 * The benchmark workload: one period of a {@link SyntheticScene} on a 640x480 sensor, generated
 * once per fork and cut into full batches of {@value #BATCH_EVENTS} events, held both decoded
 * (pristine {@link EventBatch}es, never modified) and encoded (one packet of bytes per batch, as
 * {@link EventPacketCodec} lays them out). A {@link Replay} walks the batches over and over with the
 * time shifted by one period per pass.
 *
 * <p>Also holds the split points for a readout every {@value #READOUT_INTERVAL_US} us of sensor time:
 * for each batch, the offsets at which a readout tick falls (a tick at time T comes after every
 * event at or before T and before every later event) and the tick times.
 */
@State(Scope.Benchmark)
public class SceneEvents {
    /** Sensor width. */
    public static final int WIDTH = 640;
    /** Sensor height. */
    public static final int HEIGHT = 480;
    /** Events per batch and per packet; the unit of one benchmark invocation. */
    public static final int BATCH_EVENTS = 4096;
    /** Events in one period of the scene (before cutting to whole batches). */
    public static final int SCENE_EVENTS = 3_000_000;
    /** Mean event rate of the scene: 20 million events per second. */
    public static final double EVENTS_PER_SECOND = 20e6;
    /** Share of uniform background-noise events. */
    public static final double NOISE_FRACTION = 0.10;
    /** Seed of the scene. */
    public static final long SEED = 0x5EED_2026L;
    /** Readout interval for the chain-with-readout benchmark: 1 ms of sensor time. */
    public static final long READOUT_INTERVAL_US = 1_000;
    /** Sensor time of the first replay's start; any positive value. */
    public static final long START_US = 1_000_000;

    /** Scene that was cut into batches. */
    public SyntheticScene scene;
    /** Pristine decoded batches; never modified. */
    public EventBatch[] batches;
    /** One packet per batch: the batch's events encoded relative to its time base. */
    public ByteBuffer[] packets;
    /** Time shift per replay: the scene's period. */
    public long periodUs;
    /** For each batch, the offsets (0..BATCH_EVENTS) at which readout ticks fall, ascending. */
    public int[][] tickOffsets;
    /** For each batch, the tick times of the first replay, matching {@link #tickOffsets}. */
    public long[][] tickTimesUs;

    /** Generates, decodes and encodes the workload. */
    @Setup(Level.Trial)
    public void generate() {
        long started = System.nanoTime();
        scene = SyntheticScene.generate(WIDTH, HEIGHT, SCENE_EVENTS, EVENTS_PER_SECOND, NOISE_FRACTION, SEED);
        periodUs = scene.periodUs();
        int count = scene.size() / BATCH_EVENTS;
        batches = new EventBatch[count];
        packets = new ByteBuffer[count];
        byte[] bytes = new byte[count * BATCH_EVENTS * EventPacketCodec.BYTES_PER_EVENT];
        ByteBuffer all = ByteBuffer.wrap(bytes);
        for (int b = 0; b < count; b++) {
            EventBatch batch = new EventBatch(BATCH_EVENTS);
            int first = b * BATCH_EVENTS;
            batch.reset(START_US + scene.t(first));
            for (int i = first; i < first + BATCH_EVENTS; i++) {
                batch.add(scene.x(i), scene.y(i), START_US + scene.t(i), scene.p(i));
            }
            batches[b] = batch;
            int offset = all.position();
            EventPacketCodec.encode(batch, all);
            packets[b] = ByteBuffer.wrap(bytes, offset, all.position() - offset).slice();
        }
        splitAtTicks(count);
        System.out.printf("scene: %dx%d, %d blobs, %d events per %d ms period (%.1f%% noise, %.1f M events/s),"
                + " %d batches of %d, generated in %d ms%n",
                WIDTH, HEIGHT, scene.blobs(), count * BATCH_EVENTS, periodUs / 1000,
                100.0 * (scene.size() - scene.signalEvents()) / scene.size(),
                scene.size() / (periodUs * 1e-6) / 1e6, count, BATCH_EVENTS,
                (System.nanoTime() - started) / 1_000_000);
    }

    private void splitAtTicks(int count) {
        int events = count * BATCH_EVENTS;
        int[] ticksPerBatch = new int[count];
        long ticks = periodUs / READOUT_INTERVAL_US;
        int[] at = new int[(int) ticks];
        int g = 0;
        for (int k = 1; k <= ticks; k++) {
            long tick = k * READOUT_INTERVAL_US; // relative to the replay start; the last is the next start
            while (g < events && scene.t(g) <= tick) {
                g++;
            }
            at[k - 1] = g;
            ticksPerBatch[batchOf(g, count)]++;
        }
        tickOffsets = new int[count][];
        tickTimesUs = new long[count][];
        for (int b = 0; b < count; b++) {
            tickOffsets[b] = new int[ticksPerBatch[b]];
            tickTimesUs[b] = new long[ticksPerBatch[b]];
        }
        int[] filled = new int[count];
        for (int k = 1; k <= ticks; k++) {
            int global = at[k - 1];
            int b = batchOf(global, count);
            tickOffsets[b][filled[b]] = global - b * BATCH_EVENTS;
            tickTimesUs[b][filled[b]] = START_US + k * READOUT_INTERVAL_US;
            filled[b]++;
        }
    }

    /** The batch a tick after {@code global} events belongs to; a tick after the last event goes to the last batch. */
    private static int batchOf(int global, int count) {
        return Math.min(global / BATCH_EVENTS, count - 1);
    }

    /** Events in one replay. */
    public int eventsPerReplay() {
        return batches.length * BATCH_EVENTS;
    }
}
