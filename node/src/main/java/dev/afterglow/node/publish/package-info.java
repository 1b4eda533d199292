/** Subscriber fan-out: a frame is encoded once per distinct request and shared; slow subscribers miss frames. */
package dev.afterglow.node.publish;
