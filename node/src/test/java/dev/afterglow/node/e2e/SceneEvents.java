package dev.afterglow.node.e2e;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.synth.EventGenerationModel;
import dev.afterglow.node.demo.ConveyorScene;
import dev.afterglow.node.demo.NoiseSource;
import java.util.ArrayList;
import java.util.List;

/** Deterministic event packets from the demo's conveyor scene plus noise, for end-to-end tests. */
final class SceneEvents {
    private SceneEvents() {
    }

    /** Packets of {@code packetUs} each, covering [0, durationUs) of sensor time. */
    static List<EventBatch> packets(int width, int height, long durationUs, long packetUs, long seed) {
        ConveyorScene scene = new ConveyorScene(width, height, width * 0.5, seed);
        EventGenerationModel model = new EventGenerationModel(width, height, 0.2);
        NoiseSource noise = new NoiseSource(width, height, 2.0, 2, 300, seed + 1);
        double[] log = new double[width * height];
        scene.logIntensity(0, log);
        model.start(0, log);
        List<EventBatch> out = new ArrayList<>();
        EventBatch signal = new EventBatch(1 << 16);
        EventBatch noiseBatch = new EventBatch(1 << 16);
        for (long t = 0; t < durationUs; t += packetUs) {
            signal.reset(t);
            noiseBatch.reset(t);
            scene.logIntensity(t + packetUs, log);
            model.advance(t + packetUs, log, signal);
            noise.step(t, t + packetUs, noiseBatch);
            EventBatch merged = new EventBatch(Math.max(1, signal.size + noiseBatch.size));
            merge(signal, noiseBatch, merged);
            if (merged.size > 0) {
                out.add(merged);
            }
        }
        return out;
    }

    private static void merge(EventBatch a, EventBatch b, EventBatch out) {
        out.reset(a.timeBaseUs);
        int i = 0;
        int j = 0;
        while (i < a.size || j < b.size) {
            if (j >= b.size || (i < a.size && a.timeUs(i) <= b.timeUs(j))) {
                out.add(a.x[i], a.y[i], a.timeUs(i), a.p[i]);
                i++;
            } else {
                out.add(b.x[j], b.y[j], b.timeUs(j), b.p[j]);
                j++;
            }
        }
    }
}
