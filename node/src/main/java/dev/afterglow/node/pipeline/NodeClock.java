package dev.afterglow.node.pipeline;

/** Host time for the node, injectable so tests can move time by hand. */
public interface NodeClock {
    /** Monotonic time in nanoseconds (for lags and durations). */
    long monotonicNanos();

    /** Wall-clock time in nanoseconds since the Unix epoch (for stamps in frames). */
    long wallNanos();

    /** The system clocks. */
    NodeClock SYSTEM = new NodeClock() {
        @Override
        public long monotonicNanos() {
            return System.nanoTime();
        }

        @Override
        public long wallNanos() {
            java.time.Instant now = java.time.Instant.now();
            return now.getEpochSecond() * 1_000_000_000L + now.getNano();
        }
    };
}
