/** The built-in demo: a synthetic conveyor scene streamed through a chain, with PNG snapshots. */
package dev.afterglow.node.demo;
