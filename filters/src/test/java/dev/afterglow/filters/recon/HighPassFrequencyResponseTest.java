package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Frequency response of {@link HighPassFilter} driven by events from a sinusoidal log intensity,
 * checked against the first-order high-pass H(s) = s/(s+a).
 *
 * <p>The events quantise the signal to steps of C; with A = 100·C that adds a square-wave error of
 * about C/2 in amplitude (under 1% of A), far inside the tolerances below.
 */
class HighPassFrequencyResponseTest {
    private static final double AMPLITUDE = 2.0;
    private static final double CONTRAST = 0.02;

    /** Gain and phase lead of the filter at w, from a least-squares fit after transients. */
    private static SinusoidFit response(double cutoff, double w) {
        HighPassFilter filter = new HighPassFilter(1, 1, CONTRAST, cutoff);
        double period = 2 * Math.PI / w;
        // Transient decays as exp(-a·t): after 8/a it is e^-8 of its start; also skip 3 periods.
        double settle = Math.max(8 / cutoff, 3 * period);
        double end = settle + 10 * period;
        SinusoidFit fit = SinusoidDrive.run(filter, AMPLITUDE, CONTRAST, w,
                (long) (settle * 1e6), (long) (end * 1e6), 0, null);
        assertEquals(filter.counters().eventsIn(), filter.counters().eventsOut(), "high-pass drops no events");
        return fit;
    }

    @ParameterizedTest(name = "a={0}rad/s, w={1}·a")
    @CsvSource({"100, 0.1", "100, 1", "100, 10", "1000, 0.1", "1000, 1", "1000, 10"})
    void shouldMatchFirstOrderHighPassMagnitude(double cutoff, double ratio) {
        double w = ratio * cutoff;
        SinusoidFit fit = response(cutoff, w);
        double measuredDb = 20 * Math.log10(fit.amplitude() / AMPLITUDE);
        // First-order high-pass s/(s+a): |H(jw)| = w / sqrt(w^2 + a^2), -3 dB at w = a
        // (any signals and systems handbook, e.g. Oppenheim & Willsky, "Signals and Systems").
        double expectedDb = 20 * Math.log10(w / Math.sqrt(w * w + cutoff * cutoff));
        assertEquals(expectedDb, measuredDb, 1.0,
                "gain at w=" + w + "rad/s, a=" + cutoff + "rad/s (" + fit.samples() + " samples)");
    }

    @ParameterizedTest(name = "a={0}rad/s, w={1}·a")
    @CsvSource({"100, 0.1", "100, 1", "100, 10", "1000, 0.1", "1000, 1", "1000, 10"})
    void shouldLeadInputByFirstOrderHighPassPhase(double cutoff, double ratio) {
        double w = ratio * cutoff;
        SinusoidFit fit = response(cutoff, w);
        double measuredDeg = Math.toDegrees(fit.phaseRad());
        // arg H(jw) = arg(jw / (jw + a)) = 90° - atan(w/a) = atan(a/w): a phase lead
        // (same handbook source as above). The C/2 quantisation lag costs about 0.4°.
        double expectedDeg = Math.toDegrees(Math.atan(cutoff / w));
        assertEquals(expectedDeg, measuredDeg, 3.0, "phase at w=" + w + "rad/s, a=" + cutoff + "rad/s");
    }
}
