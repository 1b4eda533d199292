package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.RandomEventStream;
import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link DirectIntegration} against the naive sum {@code L = C * sum p} per pixel in double
 * (the direct-integration baseline of the event generation model: each event stands for a log step
 * of p*C).
 */
class DirectIntegrationTest {

    @ParameterizedTest(name = "{0}x{1} seed {2} C {3}")
    @CsvSource({
        "32, 24, 1, 0.2",
        "32, 24, 2, 0.13",
        "40, 17, 3, 0.5",
        "17, 40, 4, 2",
        "40, 17, 5, 0.01",
    })
    void shouldReadOutContrastTimesTheNetEventCount(int w, int h, long seed, double contrast) {
        RandomEventStream s = RandomEventStream.builder(w, h, seed).disorder(0.02, 30).build();
        DirectIntegration fast = new DirectIntegration(w, h, contrast);
        double[] naive = new double[w * h];
        float[] out = new float[w * h];
        SplittableRandom rnd = new SplittableRandom(seed);
        EventBatch batch = s.newBatch();
        int readouts = 0;
        double largest = 0;
        for (int b = 0; b < s.batches; b++) {
            s.fill(b, batch);
            fast.process(batch);
            for (int i = s.batchFrom(b); i < s.batchTo(b); i++) {
                naive[s.y[i] * w + s.x[i]] += contrast * s.p[i];
            }
            {
                long readAt = s.batchBase(b) + rnd.nextLong(1_000_000);
                fast.readLog(readAt, out);
                readouts++;
                for (int i = 0; i < out.length; i++) {
                    largest = Math.max(largest, Math.abs(naive[i]) / contrast);
                    // The readout is a float array: its own rounding (one ulp) is allowed on top.
                    if (!(Math.abs(out[i] - naive[i]) <= 1e-4 * contrast + Math.ulp((float) naive[i]))) {
                        fail("pixel " + i + ": got " + out[i] + ", naive " + naive[i]);
                    }
                }
            }
        }
        assertEquals(s.size, fast.counters().eventsOut());
        assertTrue(readouts > 10, "readouts: " + readouts);
        assertTrue(largest > 5, "some pixel must have drifted: " + largest + " C");
    }
}
