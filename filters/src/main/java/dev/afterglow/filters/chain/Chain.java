package dev.afterglow.filters.chain;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.recon.Reconstruction;
import java.util.ArrayList;
import java.util.List;

/**
 * A built chain for one sensor: denoise stages followed by a reconstruction, all state allocated
 * here. Threading: one owner thread runs {@link #process} and the readout; counters may be read
 * from anywhere.
 *
 * <p>A stage may hold resources outside the heap (the learned reconstruction's ONNX Runtime
 * session): {@link #close()} releases them, so close a chain that is replaced or dropped.
 */
public final class Chain implements AutoCloseable {
    private final ChainSpec spec;
    private final int width;
    private final int height;
    private final EventStage[] stages;
    private final Reconstruction reconstruction;

    private Chain(ChainSpec spec, int width, int height, EventStage[] stages) {
        this.spec = spec;
        this.width = width;
        this.height = height;
        this.stages = stages;
        this.reconstruction = (Reconstruction) stages[stages.length - 1];
    }

    /** Builds {@code spec} for a sensor of {@code width} x {@code height} pixels. */
    public static Chain build(ChainSpec spec, int width, int height) {
        if (width < 1 || height < 1 || (long) width * height > 1 << 26) {
            throw new ChainSpecException("sensor geometry " + width + "x" + height + " outside 1x1 .. 67108864 pixels");
        }
        List<StageSpec> specs = spec.stages();
        EventStage[] built = new EventStage[specs.size()];
        try {
            for (int i = 0; i < built.length; i++) {
                built[i] = specs.get(i).kind().build(specs.get(i), width, height);
            }
        } catch (RuntimeException e) {
            closeAll(built);
            throw e;
        }
        return new Chain(spec, width, height, built);
    }

    /**
     * Releases what the stages hold outside the heap (stages that are {@link AutoCloseable}).
     * Call on the owner thread, or once the owner no longer uses the chain. Idempotent.
     */
    @Override
    public void close() {
        closeAll(stages);
    }

    private static void closeAll(EventStage[] stages) {
        RuntimeException first = null;
        for (EventStage s : stages) {
            if (s instanceof AutoCloseable c) {
                try {
                    c.close();
                } catch (Exception e) {
                    if (first == null) {
                        first = e instanceof RuntimeException r ? r : new IllegalStateException(e);
                    }
                }
            }
        }
        if (first != null) {
            throw first;
        }
    }

    /** Parses {@code description} and builds it. */
    public static Chain build(String description, int width, int height) {
        return build(ChainSpec.parse(description), width, height);
    }

    /** Runs every stage over the batch; on return the batch holds the events that reached the reconstruction. */
    public void process(EventBatch batch) {
        for (EventStage stage : stages) {
            if (batch.size == 0) {
                break;
            }
            stage.process(batch);
        }
    }

    /**
     * Runs every stage like {@link #process(EventBatch)} and reports each stage's wall time for
     * this batch to {@code timer} (two {@link System#nanoTime()} reads per stage, per batch).
     */
    public void process(EventBatch batch, StageTimer timer) {
        for (int i = 0; i < stages.length; i++) {
            if (batch.size == 0) {
                break;
            }
            long start = System.nanoTime();
            stages[i].process(batch);
            timer.stageDone(i, System.nanoTime() - start);
        }
    }

    /** Receives per-batch stage times from {@link #process(EventBatch, StageTimer)}; called on the chain's thread. */
    @FunctionalInterface
    public interface StageTimer {
        /** Stage {@code index} (0-based position in the chain) took {@code nanos} for one batch. */
        void stageDone(int index, long nanos);
    }

    /** The description this chain was built from. */
    public ChainSpec spec() {
        return spec;
    }

    /** All stages in order. */
    public List<EventStage> stages() {
        return List.of(stages);
    }

    /** The last stage. */
    public Reconstruction reconstruction() {
        return reconstruction;
    }

    /** Stages of the given type, in order. */
    public <T extends EventStage> List<T> stagesOf(Class<T> type) {
        List<T> found = new ArrayList<>();
        for (EventStage s : stages) {
            if (type.isInstance(s)) {
                found.add(type.cast(s));
            }
        }
        return found;
    }

    /** Sensor width. */
    public int width() {
        return width;
    }

    /** Sensor height. */
    public int height() {
        return height;
    }
}
