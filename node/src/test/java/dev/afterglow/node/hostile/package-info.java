/**
 * Hostile and faulty peers against a real node: each test starts a legitimate real-time sensor and
 * subscriber, attacks the node over raw sockets (envelopes built from the schema's classes, length
 * prefixes written by hand, so no client code of the node can soften an attack), and checks that
 * the legitimate sensor keeps its frames, its counters add up, {@code /metrics} keeps answering
 * and the node's resident memory stays bounded. The node runs in its own JVM ({@link HostileNode})
 * so its RSS can be read and a wedged or exhausted node cannot take the test JVM with it.
 */
package dev.afterglow.node.hostile;
