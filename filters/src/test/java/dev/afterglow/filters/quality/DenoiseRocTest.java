package dev.afterglow.filters.quality;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.denoise.BackgroundActivityFilter;
import dev.afterglow.filters.synth.EventLabel;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SensorConfig;
import dev.afterglow.filters.synth.SyntheticSensor;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * {@link DenoiseRoc} counts: the events given to each denoiser match what the sensor emits (counted
 * here on a second sensor with the same seed), the survivors it attributes to labels add up to what
 * each stage's own counters say it passed, and counts pool over runs.
 */
class DenoiseRocTest {
    private static final int W = 64;
    private static final int H = 48;
    private static final long DURATION_US = 600_000;

    @Test
    void shouldCountTheSensorsEventsByLabelAndAgreeWithEachStagesCounters() {
        SensorConfig sensor = SensorConfig.builder(W, H).backgroundRateHz(5).seed(3).build();
        List<EventStage> built = new ArrayList<>();
        List<DenoiseRoc.Candidate> candidates = new ArrayList<>();
        for (int window : new int[] {500, 5_000, 50_000}) {
            candidates.add(new DenoiseRoc.Candidate(window + "us", "background-activity(window=" + window + "us)", (w, h) -> {
                EventStage s = new BackgroundActivityFilter(w, h, window, 1);
                built.add(s);
                return s;
            }));
        }
        DenoiseRoc roc = new DenoiseRoc(List.of(new DenoiseRoc.Family("ba", "window", candidates)));
        roc.run(SceneKind.PARCEL_LINE.create(W, H, 3), sensor, DURATION_US);

        long[] emitted = emitted(sensor);
        List<DenoiseRoc.Point> points = roc.results().get(0).points();
        for (int i = 0; i < points.size(); i++) {
            DenoiseRoc.Point p = points.get(i);
            assertEquals(emitted[EventLabel.SIGNAL], p.signalIn(), "signal in");
            assertEquals(emitted[EventLabel.BACKGROUND], p.backgroundIn(), "background in");
            assertEquals(emitted[EventLabel.HOT_PIXEL], p.hotIn(), "hot in");
            assertEquals(built.get(i).counters().eventsIn(), p.signalIn() + p.backgroundIn() + p.hotIn());
            assertEquals(built.get(i).counters().eventsOut(), p.signalKept() + p.backgroundKept() + p.hotKept());
        }
        assertTrue(emitted[EventLabel.BACKGROUND] > 1000 && emitted[EventLabel.SIGNAL] > 1000, "a stream worth measuring");
        // A longer window keeps more of everything (the same stream, more support found).
        assertTrue(points.get(0).keptSignal() < points.get(1).keptSignal());
        assertTrue(points.get(1).keptSignal() < points.get(2).keptSignal());
        assertTrue(points.get(0).removedBackground() > points.get(2).removedBackground());
    }

    @Test
    void shouldPoolCountsOverRuns() {
        SensorConfig sensor = SensorConfig.builder(W, H).seed(4).build();
        DenoiseRoc once = new DenoiseRoc(List.of(DenoiseRoc.patchSupport()));
        once.run(SceneKind.DOCK_DOOR.create(W, H, 4), sensor, DURATION_US);
        DenoiseRoc twice = new DenoiseRoc(List.of(DenoiseRoc.patchSupport()));
        twice.run(SceneKind.DOCK_DOOR.create(W, H, 4), sensor, DURATION_US);
        twice.run(SceneKind.DOCK_DOOR.create(W, H, 4), sensor, DURATION_US);
        DenoiseRoc.Point a = once.results().get(0).points().get(5);
        DenoiseRoc.Point b = twice.results().get(0).points().get(5);
        assertEquals(2 * a.signalIn(), b.signalIn());
        assertEquals(2 * a.backgroundKept(), b.backgroundKept());
        assertEquals(a.keptSignal(), b.keptSignal(), 1e-12);
        assertEquals(once.results().get(0).area(), twice.results().get(0).area(), 1e-12);
    }

    @Test
    void shouldBuildTheStandardFamiliesFromChainSyntax() {
        List<DenoiseRoc.Family> families = DenoiseRoc.standardFamilies();
        assertEquals(List.of("background-activity", "correlation k=2", "correlation k=3", "patch-support"),
                families.stream().map(DenoiseRoc.Family::name).toList());
        for (DenoiseRoc.Family f : families) {
            assertEquals(DenoiseRoc.WINDOWS.size(), f.candidates().size());
        }
        assertEquals("patch-support(window=1500us, support=6, radius=2, fill=0)",
                families.get(3).candidates().get(6).description());
        assertThrows(IllegalArgumentException.class, () -> DenoiseRoc.Family.ofChain("x", "window", List.of("1ms"),
                v -> "refractory(period=" + v + ") | background-activity"));
    }

    private static long[] emitted(SensorConfig config) {
        SyntheticSensor s = new SyntheticSensor(SceneKind.PARCEL_LINE.create(W, H, 3), config);
        EventBatch b = new EventBatch(1 << 16);
        long[] counts = new long[3];
        while (s.timeUs() < DURATION_US) {
            b.reset(s.timeUs());
            s.step(Math.min(s.timeUs() + 7_000, DURATION_US), b);
            for (int i = 0; i < b.size; i++) {
                counts[s.labels()[i]]++;
            }
        }
        return counts;
    }
}
