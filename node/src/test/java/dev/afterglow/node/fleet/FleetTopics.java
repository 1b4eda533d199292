package dev.afterglow.node.fleet;

import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.NewTopic;

/**
 * Makes the fleet benchmark's topics afresh: {@code FleetTopics BOOTSTRAP PARTITIONS TOPIC...}
 * deletes the named topics if they exist and creates them with the given partitions (replication
 * 1: one broker).
 */
public final class FleetTopics {
    private FleetTopics() {
    }

    public static void main(String[] args) throws Exception {
        int partitions = Integer.parseInt(args[1]);
        List<String> names = List.of(args).subList(2, args.length);
        try (Admin admin = Admin.create(Map.of("bootstrap.servers", args[0]))) {
            Set<String> existing = admin.listTopics().names().get(30, TimeUnit.SECONDS);
            List<String> old = names.stream().filter(existing::contains).toList();
            if (!old.isEmpty()) {
                admin.deleteTopics(old).all().get(30, TimeUnit.SECONDS);
                long deadline = System.nanoTime() + 30_000_000_000L;
                while (admin.listTopics().names().get().stream().anyMatch(old::contains) && System.nanoTime() < deadline) {
                    Thread.sleep(200);
                }
            }
            for (int attempt = 0; ; attempt++) {
                try {
                    admin.createTopics(names.stream().map(n -> new NewTopic(n, partitions, (short) 1)).toList())
                            .all().get(30, TimeUnit.SECONDS);
                    break;
                } catch (java.util.concurrent.ExecutionException e) {
                    if (attempt > 20) {
                        throw e;
                    }
                    Thread.sleep(500); // deletion still in progress
                }
            }
            System.out.println("topics " + names + " with " + partitions + " partitions");
        }
    }
}
