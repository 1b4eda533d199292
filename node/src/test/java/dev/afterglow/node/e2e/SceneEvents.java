package dev.afterglow.node.e2e;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SyntheticSensor;
import java.util.ArrayList;
import java.util.List;

/** Deterministic event packets from the synthetic sensor's parcel-line scene, for end-to-end tests. */
public final class SceneEvents {
    private SceneEvents() {
    }

    /** Packets of {@code packetUs} each, covering [0, durationUs) of sensor time (empty ones left out). */
    public static List<EventBatch> packets(int width, int height, long durationUs, long packetUs, long seed) {
        SyntheticSensor sensor = new SyntheticSensor(SceneKind.PARCEL_LINE.create(width, height, seed),
                SceneKind.PARCEL_LINE.sensor(width, height).backgroundRateHz(2).seed(seed).build());
        List<EventBatch> out = new ArrayList<>();
        EventBatch step = new EventBatch(1 << 16);
        for (long t = 0; t < durationUs; t += packetUs) {
            step.reset(t);
            sensor.step(t + packetUs, step);
            if (step.size > 0) {
                EventBatch copy = new EventBatch(step.size);
                copy.copyFrom(step);
                out.add(copy);
            }
        }
        return out;
    }

    /** Sleeps until {@code sensorUs} of sensor time has passed since {@code startNanos} (real-time pacing). */
    public static void paceRealTime(long startNanos, long sensorUs) throws InterruptedException {
        long wait = startNanos + sensorUs * 1000 - System.nanoTime();
        if (wait > 0) {
            java.util.concurrent.TimeUnit.NANOSECONDS.sleep(wait);
        }
    }
}
