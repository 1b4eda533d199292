package dev.afterglow.node.fleet;

import java.util.logging.Level;
import java.util.logging.Logger;

/**
 * The Kafka clients log through SLF4J into java.util.logging; at INFO they print every client's
 * whole configuration and each connection. Kept at WARNING. The logger is held here: one nobody
 * references may be collected and forget its level.
 */
public final class KafkaLogging {
    private static final Logger KAFKA = Logger.getLogger("org.apache.kafka");
    /** The broker's own classes (package {@code kafka}), when a test or a benchmark runs one in this JVM. */
    private static final Logger BROKER = Logger.getLogger("kafka");

    static {
        KAFKA.setLevel(Level.WARNING);
        BROKER.setLevel(Level.WARNING);
    }

    private KafkaLogging() {
    }

    /** Makes sure the level is set (the class's initialisation does it). */
    public static void quiet() {
        // initialisation sets the level
    }
}
