/** Framing of envelopes on TCP streams (varint length prefix, bounded) and their encoding. */
package dev.afterglow.node.wire;
