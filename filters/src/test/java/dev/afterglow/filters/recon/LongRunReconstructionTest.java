package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.LongRunStreams;
import dev.afterglow.filters.RandomEventStream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Over more than 2.5 hours of sensor time (crossing 2^31 us and 2^32 us, with gaps of minutes),
 * the high-pass and complementary filters must read out what their naive double-precision
 * references compute, within 1e-4 C (plus the float readout's own rounding) at every pixel, at
 * readouts spread over the run. The cut-offs span slow (the decay clock's span is capped), middle
 * and fast (a renormalisation at nearly every sparse event) regimes. The references and the
 * comparison are those of {@link HighPassFilterTest} and {@link ComplementaryFilterTest}.
 */
class LongRunReconstructionTest {

    @ParameterizedTest(name = "cutoff {0}rad/s")
    @CsvSource({"0.05", "5", "500"})
    void shouldMatchTheNaiveHighPassFilterForHours(double cutoff) {
        RandomEventStream s = LongRunStreams.hours(16, 12, 41);
        double largest = HighPassFilterTest.checkAgainstNaive(s, 0.2, cutoff, 42);
        assertTrue(largest >= 1, "largest |L| " + largest + " C");
    }

    @ParameterizedTest(name = "cutoff {0}/{1}rad/s")
    @CsvSource({"0.05, 0.005", "5, 0.5", "500, 0", "500, 5"})
    void shouldMatchTheNaiveComplementaryFilterForHours(double cutoff, double lowCutoff) {
        RandomEventStream s = LongRunStreams.hours(13, 7, 43);
        double largest = ComplementaryFilterTest.checkAgainstNaive(s, 0.2, cutoff, lowCutoff,
                ComplementaryFilterTest.FrameKind.MIXED, 44, 0.35);
        assertTrue(largest >= 1, "largest |L - L_F| " + largest + " C");
    }
}
