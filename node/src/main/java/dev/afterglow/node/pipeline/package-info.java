/**
 * Per-sensor pipelines: each sensor's chain, clock mapping, frame schedule and shedding, all
 * owned by one pipeline thread.
 */
package dev.afterglow.node.pipeline;
