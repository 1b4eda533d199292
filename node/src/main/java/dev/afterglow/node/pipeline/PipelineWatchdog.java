package dev.afterglow.node.pipeline;

import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import java.util.Collection;
import java.util.Set;
import java.util.TreeSet;
import java.util.concurrent.ConcurrentHashMap;

/**
 * Finds pipelines that have work and make no progress ({@link SensorPipeline#stalledForNanos}):
 * each one is counted once per stall in its {@code pipeline stalls} counter, logged once, and
 * named by {@link #stalled()} (which {@code /ready} reports) until it makes progress again.
 * {@link #check} runs on a thread of its own choosing, never a pipeline thread.
 */
public final class PipelineWatchdog {
    private final NodeClock clock;
    private final long stallNanos;
    private final Set<String> stalled = ConcurrentHashMap.newKeySet();

    public PipelineWatchdog(NodeClock clock, long stallNanos) {
        this.clock = clock;
        this.stallNanos = stallNanos;
    }

    /** Looks at every pipeline once. */
    public void check(Collection<SensorPipeline> pipelines) {
        long now = clock.monotonicNanos();
        Set<String> seen = new TreeSet<>();
        for (SensorPipeline p : pipelines) {
            seen.add(p.id());
            if (p.stalledForNanos(now) > stallNanos) {
                if (stalled.add(p.id())) {
                    p.counters().increment(NodeCounter.PIPELINE_STALLS);
                    OnceLog.warn("stall:" + p.id(), "sensor " + p.id() + ": pipeline has work and made no progress for "
                            + p.stalledForNanos(now) / 1_000_000 + " ms", null);
                }
            } else {
                stalled.remove(p.id());
            }
        }
        stalled.retainAll(seen);
    }

    /** Ids of the pipelines stalled at the last check, comma-separated in order; empty if none. */
    public String stalled() {
        return String.join(", ", new TreeSet<>(stalled));
    }
}
