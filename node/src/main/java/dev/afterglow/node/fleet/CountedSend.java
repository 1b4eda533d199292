package dev.afterglow.node.fleet;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import org.apache.kafka.clients.producer.Callback;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerRecord;

/**
 * One sensor's sends to a topic that never block the caller (an ingest or pipeline thread; the
 * producers have {@code max.block.ms=0}): a record the broker took is counted as sent; one
 * refused at once (buffer full, too large, producer closed) or later by the broker is counted as
 * dropped, and the first of each kind is logged.
 */
final class CountedSend {
    private final KafkaProducer<byte[], byte[]> producer;
    private final Counters counters;
    private final NodeCounter dropped;
    private final String what;
    private final Callback onSent;

    /**
     * @param sent counter of records the broker took
     * @param dropped counter of records lost
     * @param what the kind of record, for the log line (e.g. "a frame of sensor X")
     */
    CountedSend(KafkaProducer<byte[], byte[]> producer, Counters counters, NodeCounter sent, NodeCounter dropped, String what) {
        this.producer = producer;
        this.counters = counters;
        this.dropped = dropped;
        this.what = what;
        this.onSent = (metadata, e) -> {
            if (e == null) {
                counters.increment(sent);
            } else {
                dropped(e, metadata == null ? "" : metadata.topic());
            }
        };
    }

    void send(ProducerRecord<byte[], byte[]> record) {
        try {
            producer.send(record, onSent);
        } catch (RuntimeException e) {
            dropped(e, record.topic());
        }
    }

    private void dropped(Exception e, String topic) {
        counters.increment(dropped);
        OnceLog.warn("kafka-send:" + dropped + ":" + e.getClass().getName(), what + " was not written to " + topic + ": " + e, null);
    }
}
