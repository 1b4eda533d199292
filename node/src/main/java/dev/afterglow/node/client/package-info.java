/**
 * Small blocking clients for other JVM programs: a sensor side ({@link dev.afterglow.node.client.SensorClient},
 * {@link dev.afterglow.node.client.UdpSensorClient}) and a subscriber side
 * ({@link dev.afterglow.node.client.SubscriberClient}).
 */
package dev.afterglow.node.client;
