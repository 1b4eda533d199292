package dev.afterglow.node.surge;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.util.List;
import org.junit.jupiter.api.Test;

/** Parsing of the sweep's rate list (k = 10^3, M = 10^6: SI prefixes, BIPM SI brochure). */
class RateListTest {

    @Test
    void shouldReadSuffixesPlainNumbersAndMaxInOrder() {
        RateList r = RateList.parse("--rates", "250k, 1.5M,2000000,max,MAX");
        assertEquals(List.of(250_000.0, 1_500_000.0, 2_000_000.0, RateList.MAX, RateList.MAX), r.rates());
        assertEquals(List.of("250k", "1.5M", "2000000", "max", "max"), r.labels());
        assertEquals(5, r.size());
    }

    @Test
    void shouldAcceptTheLimitsAndRefuseJustBeyond() {
        assertEquals(List.of(1_000.0, 100_000_000.0), RateList.parse("--rates", "1k,100M").rates());
        assertThrows(IllegalArgumentException.class, () -> RateList.parse("--rates", "999"));
        assertThrows(IllegalArgumentException.class, () -> RateList.parse("--rates", "100000001"));
        // Lower-case m would be milli in SI; it is refused rather than guessed.
        assertThrows(IllegalArgumentException.class, () -> RateList.parse("--rates", "5m"));
        assertThrows(IllegalArgumentException.class, () -> RateList.parse("--rates", " "));
        assertThrows(IllegalArgumentException.class, () -> RateList.parse("--rates", "1M,"));
    }
}
