package dev.afterglow.node.cli;

import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.node.surge.RateList;
import dev.afterglow.node.surge.Surge;
import dev.afterglow.node.surge.SurgeSettings;
import java.io.IOException;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * The load generator: streams synthetic events from several sensors into a running node at a sweep
 * of rates, subscribes to the frames, and reports throughput, frame latency, missed frames and shed
 * events per step (table, CSV, PNG plot).
 */
@Command(name = "surge", mixinStandardHelpOptions = true,
        description = {"Load generator: stream synthetic events into a running node at a sweep of rates, subscribe to its frames,"
                + " and report throughput, frame latency percentiles, missed frames and shed events per step.",
                "The node runs in its own process (afterglow serve); its frame rate and chain are its configuration.",
                "Over UDP the sensors (surge-0, surge-1, ...) must be listed in the node's configuration."})
public final class SurgeCommand implements Callable<Integer> {

    @Option(names = "--node", paramLabel = "HOST:PORT", description = "Node's sensor port (TCP or UDP, see --transport). Default: ${DEFAULT-VALUE}")
    String node = "127.0.0.1:7301";

    @Option(names = "--subscribe", paramLabel = "HOST:PORT", description = "Node's subscriber port. Default: ${DEFAULT-VALUE}")
    String subscribe = "127.0.0.1:7303";

    @Option(names = "--http", paramLabel = "HOST:PORT[,HOST:PORT...]", description = "Node's HTTP port, for its counters (/metrics, /status); "
            + "with --transport kafka, every member of the node's group, comma-separated (their counters are summed). Default: ${DEFAULT-VALUE}")
    String http = "127.0.0.1:7380";

    @Option(names = "--transport", description = "tcp, udp or kafka (sensors produce to --event-topic; the node consumes it). Default: ${DEFAULT-VALUE}")
    String transport = "tcp";

    @Option(names = "--kafka", paramLabel = "HOST:PORT", description = "Kafka bootstrap server, with --transport kafka. Default: ${DEFAULT-VALUE}")
    String kafka = "127.0.0.1:9092";

    @Option(names = "--event-topic", description = "Event topic the node's group consumes, with --transport kafka. Default: ${DEFAULT-VALUE}")
    String eventTopic = "afterglow.events";

    @Option(names = "--frame-topic", description = "With --transport kafka: time frames read from this topic (the node's kafka.frame-topic) instead of subscriber connections. Default: none")
    String frameTopic = "";

    @Option(names = "--sensors", description = "Sensors streaming at once, 1 .. 16 (ids surge-0, surge-1, ...). Default: ${DEFAULT-VALUE}")
    int sensors = 1;

    @Option(names = "--subscribers", description = "Subscribers per sensor, 0 .. 64. Default: ${DEFAULT-VALUE}")
    int subscribers = 1;

    @Option(names = "--rates", paramLabel = "LIST", description = "Events/s per sensor, one step each, e.g. 500k,1M,2.5M,max"
            + " (1k .. 100M; max: as fast as the sender can). Default: ${DEFAULT-VALUE}")
    String rates = "1M,2M,5M,10M";

    @Option(names = "--step-seconds", description = "Measured seconds per step, 0.5 .. 3600. Default: ${DEFAULT-VALUE}")
    double stepSeconds = 10;

    @Option(names = "--warmup-seconds", description = "Seconds sent at the step's rate before each step, not measured, 0 .. 600. Default: ${DEFAULT-VALUE}")
    double warmupSeconds = 2;

    @Option(names = "--width", description = "Sensor width, 32 .. 1280. Default: ${DEFAULT-VALUE}")
    int width = 640;

    @Option(names = "--height", description = "Sensor height, 24 .. 720. Default: ${DEFAULT-VALUE}")
    int height = 480;

    @Option(names = "--scene", description = "parcel-line, dock-door, orchard-pan, floodlit-hoist, stockroom-pan or rink-shot, each also as NAME_dark "
            + "(8x less light); the scene sets the sensor's conditions. Default: ${DEFAULT-VALUE}")
    String scene = "parcel-line";

    @Option(names = "--packet-us", description = "Sensor time per packet in microseconds, 100 .. 100000. Default: ${DEFAULT-VALUE}")
    long packetUs = 1000;

    @Option(names = "--subscriber-rate", description = "Frames per second each subscriber asks for, 0 (every frame) .. 1000; with --frame-topic, "
            + "the node's kafka.frame-rate-hz. Default: ${DEFAULT-VALUE}")
    double subscriberRate = 0;

    @Option(names = "--out", paramLabel = "DIR", description = "Folder for surge.csv and surge-latency.png. Default: ${DEFAULT-VALUE}")
    Path out = Path.of("surge-out");

    @Option(names = "--seed", description = "Seed of the synthetic sensor. Default: ${DEFAULT-VALUE}")
    long seed = 7;

    @Override
    public Integer call() throws Exception {
        SurgeSettings settings = settings();
        try {
            new Surge(settings, System.out).run();
        } catch (IOException e) {
            System.err.println("afterglow surge: " + e.getMessage());
            return 1;
        }
        return 0;
    }

    /** Checks every option and returns the settings; throws IllegalArgumentException naming the option. */
    SurgeSettings settings() {
        HostPort ingest = HostPort.parse("--node", node);
        HostPort subscriberPort = HostPort.parse("--subscribe", subscribe);
        String[] https = http.split(",");
        HostPort httpPort = HostPort.parse("--http", https[0].trim());
        java.util.List<String> moreHttp = new java.util.ArrayList<>();
        for (int i = 1; i < https.length; i++) {
            HostPort more = HostPort.parse("--http", https[i].trim());
            moreHttp.add(more.host() + ":" + more.port());
        }
        if (!transport.equals("tcp") && !transport.equals("udp") && !transport.equals("kafka")) {
            throw new IllegalArgumentException("--transport=" + transport + ": expected tcp, udp or kafka");
        }
        SurgeSettings.KafkaRoute route = null;
        if (transport.equals("kafka")) {
            HostPort.parse("--kafka", kafka);
            if (eventTopic.isBlank() || eventTopic.equals(frameTopic)) {
                throw new IllegalArgumentException("--event-topic must be set and differ from --frame-topic");
            }
            route = new SurgeSettings.KafkaRoute(kafka, eventTopic, frameTopic.isBlank() ? null : frameTopic);
        }
        Checks.range("--sensors", sensors, 1, 16);
        Checks.range("--subscribers", subscribers, 0, 64);
        RateList rateList = RateList.parse("--rates", rates);
        Checks.range("--step-seconds", stepSeconds, 0.5, 3600);
        Checks.range("--warmup-seconds", warmupSeconds, 0, 600);
        Checks.range("--width", width, SceneKind.MIN_WIDTH, 1280);
        Checks.range("--height", height, SceneKind.MIN_HEIGHT, 720);
        SceneKind kind = Scenes.parse("--scene", scene);
        Checks.range("--packet-us", packetUs, 100, 100_000);
        Checks.range("--subscriber-rate", subscriberRate, 0, 1000);
        return new SurgeSettings(ingest.host(), ingest.port(), subscriberPort.host(), subscriberPort.port(),
                httpPort.host(), httpPort.port(), moreHttp, transport.equals("udp"), sensors, subscribers, rateList,
                stepSeconds, warmupSeconds, width, height, kind, packetUs, out, subscriberRate, seed, route);
    }
}
