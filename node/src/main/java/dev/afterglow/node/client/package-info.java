/**
 * Small blocking clients for other JVM programs: a sensor side ({@link dev.afterglow.node.client.SensorClient},
 * {@link dev.afterglow.node.client.UdpSensorClient}) and a subscriber side
 * ({@link dev.afterglow.node.client.SubscriberClient}); TCP ones optionally over TLS
 * ({@link dev.afterglow.node.client.ClientTls}).
 */
package dev.afterglow.node.client;
