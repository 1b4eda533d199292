package dev.afterglow.node.cli;

import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.config.NodeConfig;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import java.util.concurrent.CountDownLatch;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/** Runs the node until SIGTERM or Ctrl-C, from a configuration file or the defaults. */
@Command(name = "serve", mixinStandardHelpOptions = true,
        description = "Run the node (ingest, pipelines, subscribers) until stopped.")
public final class ServeCommand implements Callable<Integer> {

    @Option(names = "--config", paramLabel = "FILE", description = "YAML configuration; without it the defaults apply (loopback, ports 7301-7303).")
    Path config;

    @Override
    public Integer call() throws Exception {
        NodeConfig c = config == null ? NodeConfig.defaults() : NodeConfig.load(config);
        System.out.println("afterglow: effective configuration\n" + c.toYaml());
        AfterglowNode node = AfterglowNode.start(c);
        System.out.printf("afterglow: listening on %s  sensors tcp:%d udp:%d  subscribers tcp:%d%n",
                c.listen.address, node.ingestTcpPort(), node.ingestUdpPort(), node.subscriberPort());
        if (c.tls.enabled()) {
            System.out.println("afterglow: TLS on " + String.join(", ", c.tls.listeners)
                    + (c.tls.clientCaFile.isEmpty() ? "" : " (client certificates required)"));
        }
        if (node.httpPort() >= 0) {
            System.out.printf("afterglow: http on %s:%d (/metrics /health /ready /status /live)%n", c.listen.address, node.httpPort());
        }
        CountDownLatch stopped = new CountDownLatch(1);
        Runtime.getRuntime().addShutdownHook(new Thread(() -> {
            System.out.println("afterglow: stopping (intake closed, pipelines drained, subscribers closed)");
            node.close();
            stopped.countDown();
        }, "afterglow-shutdown"));
        stopped.await();
        return 0;
    }
}
