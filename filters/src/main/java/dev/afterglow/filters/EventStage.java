package dev.afterglow.filters;

/**
 * One step of a processing chain: consumes a batch of events in time order and may remove some.
 *
 * <p>Threading: a stage and all its state belong to one thread; only {@link #counters()} may be
 * read from elsewhere. Implementations allocate all their state when built and nothing per event.
 */
public interface EventStage {

    /** Short name of the method this stage implements, as written in a chain description. */
    String name();

    /**
     * Processes the events of {@code batch} in order. A filtering stage compacts the batch in place
     * so that on return it holds only the events that passed, in their original order.
     */
    void process(EventBatch batch);

    /** Events seen and passed by this stage since it was built. */
    StageCounters counters();

    /** The stage's parameters in chain-description syntax, e.g. {@code refractory(period=1000us)}. */
    String describe();
}
