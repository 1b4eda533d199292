package dev.afterglow.node.hostile;

import org.junit.jupiter.api.function.Executable;

/**
 * Runs a check now and keeps its outcome for later, so a test can report the harm an attack did
 * to the legitimate sensor together with what the attacker saw (with {@code assertAll}), instead
 * of stopping at whichever failed first.
 */
final class Deferred {
    private Deferred() {
    }

    /** Runs {@code check}; returns an executable that rethrows what it threw, or does nothing. */
    static Executable run(Executable check) {
        try {
            check.execute();
            return () -> { };
        } catch (Throwable t) {
            return () -> {
                throw t;
            };
        }
    }
}
