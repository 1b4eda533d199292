/** Adapters from the core's single-writer counters to Micrometer meters. */
package dev.afterglow.metrics;
