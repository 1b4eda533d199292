package dev.afterglow.filters.quality;

import java.util.Arrays;

/**
 * The split of scene and sensor seeds between choosing and reporting. Every parameter and default
 * of the project is chosen on {@link #TUNING} seeds only; every figure the project reports (the
 * README's tables, {@code afterglow assess} by default, the quality checks in CI) comes from
 * {@link #VALIDATION} seeds, which no choice ever looked at. A seed builds both the scene (its
 * textures, layout and movers) and the sensor (mismatch, noise, hot pixels, jitter, read noise),
 * so a validation seed is a different scene, not just different noise.
 */
public final class BenchmarkSeeds {
    /** Seeds for choosing parameters and defaults (7 also made the scene pictures before the split). */
    public static final long[] TUNING = {7, 8, 9};
    /** Seeds for reporting; never used to choose anything. */
    public static final long[] VALIDATION = {1001, 1002, 1003};

    private BenchmarkSeeds() {
    }

    /** The seeds of a named set, {@code tuning} or {@code validation}. */
    public static long[] named(String set) {
        return switch (set) {
            case "tuning" -> TUNING.clone();
            case "validation" -> VALIDATION.clone();
            default -> throw new IllegalArgumentException("unknown seed set \"" + set + "\"; expected tuning or validation");
        };
    }

    /** Whether {@code seed} is a tuning seed. */
    public static boolean isTuning(long seed) {
        return Arrays.stream(TUNING).anyMatch(s -> s == seed);
    }
}
