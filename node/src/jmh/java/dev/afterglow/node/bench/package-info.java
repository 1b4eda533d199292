/**
 * JMH benchmarks of the node, built and run only with the Maven profile {@code bench}: rendering
 * and encoding published frames ({@link dev.afterglow.node.bench.FrameEncodeBenchmark}). The
 * benchmarks of the reconstruction core (decode, stages, chain, readout) live in the filters module.
 */
package dev.afterglow.node.bench;
