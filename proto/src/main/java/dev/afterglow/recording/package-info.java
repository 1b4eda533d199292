/**
 * Afterglow recording files (format in {@code afterglow/v1/recording.proto}): segment files of
 * CRC-checked records that keep what a node received from one sensor, with writers that rotate
 * and retire segments and readers that stop cleanly at damage.
 */
package dev.afterglow.recording;
