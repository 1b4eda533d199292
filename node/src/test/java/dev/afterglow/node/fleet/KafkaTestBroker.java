package dev.afterglow.node.fleet;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.OutputStream;
import java.io.PrintStream;
import java.net.ServerSocket;
import java.net.Socket;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Properties;
import kafka.server.KafkaConfig;
import kafka.server.KafkaRaftServer;
import kafka.tools.StorageTool$;
import org.apache.kafka.common.Uuid;
import org.apache.kafka.common.utils.Time;

/**
 * A real Apache Kafka broker (KRaft mode, combined broker and controller, one node) in the test's
 * JVM on loopback ports, with a fresh log directory: the peer the fleet tests talk to. Its group
 * settings allow the short session timeouts the failover check uses (the broker's default minimum
 * session timeout is 6 s). {@link #main} runs one for the fleet benchmark script.
 */
public final class KafkaTestBroker implements AutoCloseable {
    static {
        dev.afterglow.node.fleet.KafkaLogging.quiet(); // the tests' own clients: warnings only
    }

    private final KafkaRaftServer server;
    private final int port;
    private final Path logDir;

    private KafkaTestBroker(KafkaRaftServer server, int port, Path logDir) {
        this.server = server;
        this.port = port;
        this.logDir = logDir;
    }

    /** Formats a log directory under {@code dir} and starts a broker on free loopback ports (about 8 s). */
    public static KafkaTestBroker start(Path dir) throws IOException {
        return start(dir, freePort());
    }

    /** As {@link #start(Path)}, on the given client port. */
    public static KafkaTestBroker start(Path dir, int port) throws IOException {
        int controller = freePort();
        Path logDir = Files.createDirectories(dir.resolve("kafka-log"));
        Properties p = new Properties();
        p.put("process.roles", "broker,controller");
        p.put("node.id", "1");
        p.put("listeners", "PLAINTEXT://127.0.0.1:" + port + ",CONTROLLER://127.0.0.1:" + controller);
        p.put("advertised.listeners", "PLAINTEXT://127.0.0.1:" + port);
        p.put("controller.listener.names", "CONTROLLER");
        p.put("listener.security.protocol.map", "PLAINTEXT:PLAINTEXT,CONTROLLER:PLAINTEXT");
        p.put("controller.quorum.bootstrap.servers", "127.0.0.1:" + controller);
        p.put("log.dirs", logDir.toString());
        p.put("offsets.topic.replication.factor", "1");
        p.put("offsets.topic.num.partitions", "4");
        p.put("transaction.state.log.replication.factor", "1");
        p.put("transaction.state.log.min.isr", "1");
        p.put("share.coordinator.state.topic.replication.factor", "1");
        p.put("group.initial.rebalance.delay.ms", "0");
        p.put("group.min.session.timeout.ms", "500");
        p.put("num.partitions", "4");
        p.put("auto.create.topics.enable", "false");
        Path props = dir.resolve("broker.properties");
        try (OutputStream out = Files.newOutputStream(props)) {
            p.store(out, "afterglow test broker");
        }
        ByteArrayOutputStream formatLog = new ByteArrayOutputStream();
        int rc = StorageTool$.MODULE$.execute(new String[] {"format", "-t", Uuid.randomUuid().toString(), "-c",
                props.toString(), "--standalone"}, new PrintStream(formatLog, true, StandardCharsets.UTF_8));
        if (rc != 0) {
            throw new IOException("formatting the broker's log directory failed (" + rc + "): " + formatLog);
        }
        KafkaRaftServer server = new KafkaRaftServer(KafkaConfig.fromProps(p, false), Time.SYSTEM);
        server.startup();
        KafkaTestBroker broker = new KafkaTestBroker(server, port, logDir);
        broker.awaitListening();
        return broker;
    }

    private void awaitListening() throws IOException {
        long deadline = System.nanoTime() + 60_000_000_000L;
        while (System.nanoTime() < deadline) {
            try (Socket s = new Socket("127.0.0.1", port)) {
                return;
            } catch (IOException e) {
                try {
                    Thread.sleep(100);
                } catch (InterruptedException ie) {
                    Thread.currentThread().interrupt();
                    throw new IOException("interrupted", ie);
                }
            }
        }
        throw new IOException("broker did not listen on " + port + " within 60 s");
    }

    static int freePort() throws IOException {
        try (ServerSocket s = new ServerSocket(0, 1, java.net.InetAddress.getLoopbackAddress())) {
            return s.getLocalPort();
        }
    }

    /** host:port for clients. */
    public String bootstrap() {
        return "127.0.0.1:" + port;
    }

    public Path logDir() {
        return logDir;
    }

    @Override
    public void close() {
        server.shutdown();
        server.awaitShutdown();
    }

    /** Runs a broker until killed: {@code KafkaTestBroker DIR PORT}; prints "ready host:port" once it serves. */
    public static void main(String[] args) throws Exception {
        KafkaTestBroker b = start(Path.of(args[0]), Integer.parseInt(args[1]));
        System.out.println("ready " + b.bootstrap());
        System.out.flush();
        Runtime.getRuntime().addShutdownHook(new Thread(b::close));
        Thread.currentThread().join();
    }
}
