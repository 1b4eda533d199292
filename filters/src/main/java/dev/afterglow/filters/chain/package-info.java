/**
 * Chains of stages built from a one-line description of our own syntax, for example
 *
 * <pre>
 * refractory(period=1ms) | background-activity(window=2ms) | high-pass(cutoff=5rad/s, contrast=0.2)
 * </pre>
 *
 * Stages are separated by {@code |}; each names a published method and lists parameters as
 * {@code key=value}, with explicit units on times ({@code us}, {@code ms}, {@code s}) and
 * frequencies ({@code rad/s}, {@code Hz}, converted with a = 2πf). The last stage reconstructs;
 * every earlier stage removes noise. See {@link dev.afterglow.filters.chain.StageKind} for the
 * stages, their parameters, defaults and limits.
 */
package dev.afterglow.filters.chain;
