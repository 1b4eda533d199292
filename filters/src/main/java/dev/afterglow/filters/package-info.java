/**
 * The reconstruction core: per-event denoise and reconstruction stages on primitive arrays.
 *
 * <p>Nothing in this module knows about the network, protobuf or the metrics library. Events enter
 * as an {@link dev.afterglow.filters.EventBatch} (decoded from the wire layout by
 * {@link dev.afterglow.filters.codec.EventPacketCodec}), pass through a
 * {@link dev.afterglow.filters.chain.Chain} of {@link dev.afterglow.filters.EventStage}s built from
 * a textual description, and end in a {@link dev.afterglow.filters.recon.Reconstruction} that can
 * be read out at any time.
 *
 * <p>Threading: every stage is single-threaded. One thread owns a chain and all its state; only the
 * counters ({@link dev.afterglow.filters.StageCounters}) may be read from other threads.
 */
package dev.afterglow.filters;
