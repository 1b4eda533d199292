/**
 * {@code afterglow assess}: the reconstruction quality report over the built-in synthetic scenes
 * (table, CSV of metrics over time, labelled PNG contact sheet).
 */
package dev.afterglow.node.assess;
