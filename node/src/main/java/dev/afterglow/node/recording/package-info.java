/** Recordings at the node's edges: importing and exporting plain-text event lists. */
package dev.afterglow.node.recording;
