package dev.afterglow.metrics;

import dev.afterglow.filters.chain.Chain;

/**
 * Processing time per packet of every stage of one {@link Chain}: one {@link LatencyRecorder} per
 * stage, written by the chain's thread through {@link Chain#process(dev.afterglow.filters.EventBatch,
 * Chain.StageTimer)} and exported by {@link ChainMeters} as {@value #NAME} (Prometheus
 * {@code afterglow_stage_time_seconds}) tagged with the stage.
 */
public final class StageTimers implements Chain.StageTimer {
    /** Meter name of a stage's time per packet. */
    public static final String NAME = "afterglow.stage.time";

    private final Chain chain;
    private final LatencyRecorder[] recorders;

    /** Recorders for every stage of {@code chain}. */
    public StageTimers(Chain chain) {
        this.chain = chain;
        this.recorders = new LatencyRecorder[chain.stages().size()];
        for (int i = 0; i < recorders.length; i++) {
            recorders[i] = new LatencyRecorder();
        }
    }

    @Override
    public void stageDone(int index, long nanos) {
        recorders[index].recordNanos(nanos);
    }

    /** The chain these timers belong to. */
    public Chain chain() {
        return chain;
    }

    /** Recorder of stage {@code index}. */
    public LatencyRecorder stage(int index) {
        return recorders[index];
    }
}
