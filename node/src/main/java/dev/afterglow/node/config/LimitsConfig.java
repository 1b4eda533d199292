package dev.afterglow.node.config;

/** Bounds that keep the node's memory and latency finite. */
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

    void validate() {
        Checks.range("limits.max-message-bytes", maxMessageBytes, 1024, 256 << 20);
        Checks.range("limits.max-events-per-packet", maxEventsPerPacket, 1, 1 << 24);
        Checks.range("limits.max-pending-packets", maxPendingPackets, 1, 1 << 16);
        Checks.range("limits.max-pending-bytes", maxPendingBytes, 1 << 20, 1 << 30);
        Checks.range("limits.max-subscribers", maxSubscribers, 1, 10_000);
        Checks.range("limits.subscriber-high-water-bytes", subscriberHighWaterBytes, 64 << 10, 1 << 30);
        Checks.range("limits.pipeline-threads", pipelineThreads, 1, 64);
    }
}
