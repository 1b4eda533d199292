package dev.afterglow.node.pipeline;

import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;

/**
 * What every source of a sensor's messages hands over: the TCP and UDP listeners today, a message
 * bus later. The source parses, authenticates and attaches; the input records the message when the
 * sensor records and passes it on to the sensor's pipeline thread. Any thread; never blocks.
 */
public interface SensorInput {
    /** The sensor's hello, once its source attached it (a UDP sensor has none: its first message starts it). */
    void hello(SensorHello hello, long arrivalNanos);

    /** An envelope carrying an event packet; false if the packet was shed at once (counted). */
    boolean events(Envelope envelope, long arrivalNanos, Transport transport);

    /** An envelope carrying the sensor's own frame. */
    void sensorFrame(Envelope envelope, long arrivalNanos);
}
