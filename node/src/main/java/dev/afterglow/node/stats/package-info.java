/** The node's counters, declared once with names and help text, kept as lock-free arrays. */
package dev.afterglow.node.stats;
