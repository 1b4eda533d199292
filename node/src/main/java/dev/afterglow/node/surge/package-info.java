/**
 * The load generator behind {@code afterglow surge}: a pre-generated loop of synthetic events
 * ({@link dev.afterglow.node.surge.SceneLoop}) re-timed to each asked rate
 * ({@link dev.afterglow.node.surge.PacketPlan}), one sender thread per sensor
 * ({@link dev.afterglow.node.surge.SensorSender}), subscriber probes that time every frame
 * ({@link dev.afterglow.node.surge.SubscriberProbe}), the node's counters read over HTTP before and
 * after each step ({@link dev.afterglow.node.surge.NodeScrape}), and the report: a table, a CSV and
 * a PNG plot ({@link dev.afterglow.node.surge.SurgeReport}, {@link dev.afterglow.node.surge.LatencyPlot}).
 */
package dev.afterglow.node.surge;
