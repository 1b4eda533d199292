package dev.afterglow.node.fleet;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class KafkaTestBrokerSmokeTest {
    @TempDir
    Path dir;

    @Test
    void startsAndMakesTopics() throws Exception {
        long t0 = System.nanoTime();
        try (KafkaTestBroker b = KafkaTestBroker.start(dir);
                Admin admin = Admin.create(Map.of("bootstrap.servers", b.bootstrap()))) {
            System.out.println("broker up in " + (System.nanoTime() - t0) / 1_000_000 + " ms");
            admin.createTopics(List.of(new NewTopic("t", 3, (short) 1))).all().get();
            assertEquals(3, admin.describeTopics(List.of("t")).allTopicNames().get().get("t").partitions().size());
        }
    }
}
