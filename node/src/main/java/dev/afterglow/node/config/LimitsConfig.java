package dev.afterglow.node.config;

/**
 * Bounds that keep the node's memory, connections and latency finite whatever its peers send.
 * Every limit is counted when it bites (see {@code NodeCounter}).
 */
public final class LimitsConfig {
    /** Largest accepted message on a TCP stream (length prefix), bytes. */
    public int maxMessageBytes = 4 << 20;
    /** Largest event count in one packet. */
    public int maxEventsPerPacket = 1 << 19;
    /** Packets waiting for a sensor's pipeline thread before new ones are shed. */
    public int maxPendingPackets = 512;
    /** Bytes of event data waiting for one sensor's pipeline thread before new packets are shed. */
    public int maxPendingBytes = 64 << 20;
    /** Subscriber connections at once. */
    public int maxSubscribers = 64;
    /** A subscriber's unsent bytes above which it stops receiving frames (it misses them). */
    public int subscriberHighWaterBytes = 8 << 20;
    /** Pipeline threads shared by all sensors (each sensor stays on one). */
    public int pipelineThreads = 1;
    /** Sensors known at once (listed and unlisted); a hello for one more is refused. */
    public int maxSensors = 16;
    /** Largest width x height of one sensor; a larger hello is refused. */
    public int maxSensorPixels = 1 << 22;
    /** An unlisted sensor with no connection and no packet for this long is forgotten (0: never). */
    public int sensorIdleEvictS = 300;
    /** Connections at once from one remote address, per listener. */
    public int maxConnectionsPerAddress = 32;
    /** The first message of a connection (hello, subscribe) must arrive within this. */
    public int helloTimeoutMs = 5_000;
    /** A message, once its first byte has arrived, must be complete within this. */
    public int messageTimeoutMs = 10_000;
    /** A sensor connection silent for this long is closed; an HTTP connection idle this long too. */
    public int idleTimeoutS = 120;
    /** An HTTP request must be complete (headers and body) within this. */
    public int httpRequestTimeoutMs = 10_000;
    /** A packet whose newest event is further ahead of the sensor's timeline than this is rejected. */
    public int maxTimeAheadMs = 500;
    /** A subscriber whose connection stays unwritable this long is disconnected. */
    public int subscriberStallTimeoutMs = 10_000;
    /** Bytes of encoded frames queued to all subscribers together; beyond it subscribers miss frames. */
    public int frameBufferBytes = 128 << 20;
    /** A pipeline that has work and makes no progress for this long is reported stalled. */
    public int watchdogStallMs = 2_000;

    void validate() {
        Checks.range("limits.max-message-bytes", maxMessageBytes, 1024, 256 << 20);
        Checks.range("limits.max-events-per-packet", maxEventsPerPacket, 1, 1 << 24);
        Checks.range("limits.max-pending-packets", maxPendingPackets, 1, 1 << 16);
        Checks.range("limits.max-pending-bytes", maxPendingBytes, 1 << 20, 1 << 30);
        Checks.range("limits.max-subscribers", maxSubscribers, 1, 10_000);
        Checks.range("limits.subscriber-high-water-bytes", subscriberHighWaterBytes, 64 << 10, 1 << 30);
        Checks.range("limits.pipeline-threads", pipelineThreads, 1, 64);
        Checks.range("limits.max-sensors", maxSensors, 1, 4096);
        Checks.range("limits.max-sensor-pixels", maxSensorPixels, 1, 1 << 26);
        Checks.range("limits.sensor-idle-evict-s", sensorIdleEvictS, 0, 86_400);
        Checks.range("limits.max-connections-per-address", maxConnectionsPerAddress, 1, 100_000);
        Checks.range("limits.hello-timeout-ms", helloTimeoutMs, 100, 600_000);
        Checks.range("limits.message-timeout-ms", messageTimeoutMs, 100, 600_000);
        Checks.range("limits.idle-timeout-s", idleTimeoutS, 1, 86_400);
        Checks.range("limits.http-request-timeout-ms", httpRequestTimeoutMs, 100, 600_000);
        Checks.range("limits.max-time-ahead-ms", maxTimeAheadMs, 1, 3_600_000);
        Checks.range("limits.subscriber-stall-timeout-ms", subscriberStallTimeoutMs, 100, 600_000);
        Checks.range("limits.frame-buffer-bytes", frameBufferBytes, 1 << 20, 1 << 30);
        Checks.range("limits.watchdog-stall-ms", watchdogStallMs, 100, 600_000);
    }
}
