/**
 * Fleets on Apache Kafka: the event topic (an edge's forwarder, a processing group's source), the
 * frame topic (a frame sink), and the record layouts both topics use.
 */
package dev.afterglow.node.fleet;
