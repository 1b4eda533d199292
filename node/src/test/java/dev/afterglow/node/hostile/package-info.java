/**
 * Hostile and faulty peers against a real node: each test starts a legitimate real-time sensor and
 * subscriber, attacks the node over raw sockets (envelopes built from the schema's classes, length
 * prefixes written by hand, so no client code of the node can soften an attack), and checks that
 * the legitimate sensor keeps its frames, its counters add up, {@code /metrics} keeps answering
 * and the node's resident memory stays bounded. The node runs in its own JVM ({@link HostileNode})
 * so its RSS can be read and a wedged or exhausted node cannot take the test JVM with it.
 *
 * <p>Issue items by class: {@code MessageAttackTest} 1 (Subscribe region near 2^32), 2 (time base
 * 2^62 over UDP and TCP), 3 (event count from 2^31), 4 (UDP sequence near 2^63), 5 (datagrams
 * stamped ahead), 6 (second hello), 10 (huge geometry, Origin, printed token), plus baselines and
 * sensors that start late; {@code SensorFloodTest} and {@code LargeSensorFloodTest} 7;
 * {@code MemoryAttackTest} 8; {@code TimeoutAttackTest} 9 and the stalled subscriber of 8;
 * {@code TokenAttackTest} 4, 6 and 10 with sensor tokens. Classes whose configuration uses only
 * settings older than these fixes run against any version of the node; {@code TimeoutAttackTest}
 * and {@code TokenAttackTest} need the new settings and fail at start without them.
 */
package dev.afterglow.node.hostile;
