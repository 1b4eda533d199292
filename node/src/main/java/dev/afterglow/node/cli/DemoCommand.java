package dev.afterglow.node.cli;

import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.node.AfterglowNode;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.demo.SyntheticFeed;
import dev.afterglow.proto.v1.PixelFormat;
import java.nio.file.Path;
import java.util.Locale;
import java.util.concurrent.Callable;
import java.util.concurrent.atomic.AtomicReference;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * The demo: a node on loopback, the built-in synthetic sensor streaming a scene into it
 * over TCP in real time, and a subscriber that prints one line per frame and saves PNG snapshots.
 */
@Command(name = "demo", mixinStandardHelpOptions = true,
        description = "Start a node on loopback, stream a synthetic scene into it, print frames and save PNG snapshots.")
public final class DemoCommand implements Callable<Integer> {

    @Option(names = "--chain", paramLabel = "CHAIN", description = "Chain description (see 'afterglow stages'), or 'auto': the default chain for a sensor "
            + "with frames (the demo's sensor sends them). Default: ${DEFAULT-VALUE}")
    String chain = "auto";

    @Option(names = "--scene", description = "parcel-line, dock-door, orchard-pan, floodlit-hoist, stockroom-pan or rink-shot, each also as NAME_dark "
            + "(8x less light); the scene sets the sensor's conditions. Default: ${DEFAULT-VALUE}")
    String scene = "parcel-line";

    @Option(names = "--seconds", description = "How long to run, 1 .. 3600 s. Default: ${DEFAULT-VALUE}")
    double seconds = 6;

    @Option(names = "--width", description = "32 .. 1280. Default: ${DEFAULT-VALUE}")
    int width = 320;

    @Option(names = "--height", description = "24 .. 720. Default: ${DEFAULT-VALUE}")
    int height = 240;

    @Option(names = "--rate", description = "Node frame rate, 1 .. 1000 Hz. Default: ${DEFAULT-VALUE}")
    double rate = 50;

    @Option(names = "--watch-rate", description = "Subscriber's frame rate, 1 .. 1000 Hz. Default: ${DEFAULT-VALUE}")
    double watchRate = 10;

    @Option(names = "--noise", description = "Background activity per pixel in Hz, 0 .. 100. Default: the scene's (1 Hz; stockroom-pan 5 Hz, _dark variants x3).")
    Double noiseHz;

    @Option(names = "--out", description = "Folder for PNG snapshots. Default: ${DEFAULT-VALUE}")
    Path out = Path.of("demo-out");

    @Option(names = "--save-every", description = "Save every N-th received frame, 1 .. 100000. Default: ${DEFAULT-VALUE}")
    int saveEvery = 10;

    @Override
    public Integer call() throws Exception {
        Checks.range("--seconds", seconds, 1, 3600);
        SceneKind kind = Scenes.parse("--scene", scene);
        Checks.range("--width", width, SceneKind.MIN_WIDTH, 1280);
        Checks.range("--height", height, SceneKind.MIN_HEIGHT, 720);
        Checks.range("--rate", rate, 1, 1000);
        Checks.range("--watch-rate", watchRate, 1, 1000);
        if (noiseHz != null) {
            Checks.range("--noise", noiseHz, 0, 100);
        }
        Checks.range("--save-every", saveEvery, 1, 100_000);
        String sensorId = kind.label();
        NodeConfig config = NodeConfig.parse("""
                listen:
                  ingest-tcp-port: 0
                  ingest-udp-port: -1
                  subscriber-port: 0
                  http-port: 0
                sensors:
                  - id: %s
                    width: %d
                    height: %d
                    chain: "%s"
                    frame-rate-hz: %s
                    latency-budget-ms: 50
                """.formatted(sensorId, width, height, chain.replace("\"", ""), rate), "demo");
        System.out.printf(Locale.ROOT, "afterglow demo: node on 127.0.0.1, sensor %s %dx%d, chain: %s%n",
                sensorId, width, height, config.sensors.get(0).automaticChain()
                        ? "auto, for a sensor with frames: " + config.sensors.get(0).withSendsFrames(true).chainSpec()
                        : config.sensors.get(0).chainSpec());
        try (AfterglowNode node = AfterglowNode.start(config)) {
            System.out.printf(Locale.ROOT, "afterglow demo: live view at http://127.0.0.1:%d/live?sensor=%s%n",
                    node.httpPort(), sensorId);
            AtomicReference<Exception> feedError = new AtomicReference<>();
            Thread feeder = new Thread(() -> {
                try (SensorClient c = SensorClient.connect("127.0.0.1", node.ingestTcpPort(), sensorId, width, height, true)) {
                    new SyntheticFeed(kind, width, height, noiseHz, 7).run(SyntheticFeed.tcp(c), sensorId, seconds, 1000, 1, true);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                } catch (Exception e) {
                    feedError.set(e);
                }
            }, "demo-sensor");
            long frames;
            try (SubscriberClient sub = SubscriberClient.connect("127.0.0.1", node.subscriberPort(), sensorId, watchRate,
                    PixelFormat.PIXEL_FORMAT_GRAY8)) {
                feeder.start();
                // Read until the sensor has finished and no frame came for half a second.
                sub.setTimeoutMillis(500);
                frames = new FrameWatcher(sub, System.out, out, saveEvery).run(0, () -> !feeder.isAlive());
            }
            feeder.interrupt();
            feeder.join(5_000);
            if (feedError.get() != null) {
                throw feedError.get();
            }
            System.out.printf(Locale.ROOT, "afterglow demo: %d frames received; PNG snapshots in %s%n", frames, out.toAbsolutePath());
        }
        return 0;
    }
}
