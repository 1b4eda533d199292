package dev.afterglow.node.cli;

import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.node.client.ClientTls;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.client.UdpSensorClient;
import dev.afterglow.node.demo.SyntheticFeed;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingWriter;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** Acts as a sensor: streams a synthetic scene into a running node. */
@Command(name = "feed", mixinStandardHelpOptions = true,
        description = {"Act as a sensor: stream a synthetic scene into a running node over TCP or UDP.",
                "For a sensor with a token, set AFTERGLOW_SENSOR_TOKEN: it goes in the hello (TCP) or seals every datagram (UDP)."})
public final class FeedCommand implements Callable<Integer> {

    @Option(names = "--node", paramLabel = "HOST:PORT", description = "Node's sensor port (TCP or UDP), or none (with --record-to). Default: ${DEFAULT-VALUE}")
    String node = "127.0.0.1:7301";

    @Option(names = "--record-to", paramLabel = "FOLDER", description = "Also write what is sent as a recording (segments FOLDER/SENSOR-000000.agrec, ...).")
    java.nio.file.Path recordTo;

    @Option(names = "--transport", description = "tcp or udp. Default: ${DEFAULT-VALUE}")
    String transport = "tcp";

    @Option(names = "--scene", description = "parcel-line, dock-door, orchard-pan, floodlit-hoist, stockroom-pan or rink-shot, each also as NAME_dark "
            + "(8x less light); the scene sets the sensor's conditions. Default: ${DEFAULT-VALUE}")
    String scene = "parcel-line";

    @Option(names = "--sensor-id", description = "Sensor id. Default: the scene's name.")
    String sensorId;

    @Option(names = "--width", description = "32 .. 1280. Default: ${DEFAULT-VALUE}")
    int width = 320;

    @Option(names = "--height", description = "24 .. 720. Default: ${DEFAULT-VALUE}")
    int height = 240;

    @Option(names = "--seconds", description = "Sensor time to stream, 0 (until stopped) .. 86400. Default: ${DEFAULT-VALUE}")
    double seconds = 0;

    @Option(names = "--speed", description = "Sensor seconds per wall second, 0 (as fast as possible) .. 100. Default: ${DEFAULT-VALUE}")
    double speed = 1;

    @Option(names = "--packet-us", description = "Sensor time per packet in microseconds, 100 .. 100000. Default: ${DEFAULT-VALUE}")
    long packetUs = 1000;

    @Option(names = "--noise", description = "Background activity per pixel in Hz, 0 .. 100. Default: the scene's (1 Hz; stockroom-pan 5 Hz, _dark variants x3).")
    Double noiseHz;

    @Option(names = "--frames", description = "Also send the sensor's own frames at 20 Hz (TCP only). Default: ${DEFAULT-VALUE}")
    boolean frames = true;

    @Option(names = "--seed", description = "Seed. Default: ${DEFAULT-VALUE}")
    long seed = 7;

    @Mixin
    TlsOptions tls = new TlsOptions();

    /** Read from the environment, not an option, so the secret stays out of process listings. */
    String token = System.getenv().getOrDefault("AFTERGLOW_SENSOR_TOKEN", "");

    @Override
    public Integer call() throws Exception {
        boolean toNode = !node.equals("none");
        if (!toNode && recordTo == null) {
            throw new IllegalArgumentException("--node none: give --record-to, or there is nowhere to send");
        }
        HostPort target = toNode ? HostPort.parse("--node", node) : null;
        SceneKind kind = Scenes.parse("--scene", scene);
        String id = sensorId == null ? kind.label() : sensorId;
        Checks.range("--width", width, SceneKind.MIN_WIDTH, 1280);
        Checks.range("--height", height, SceneKind.MIN_HEIGHT, 720);
        Checks.range("--seconds", seconds, 0, 86400);
        Checks.range("--speed", speed, 0, 100);
        Checks.range("--packet-us", packetUs, 100, 100_000);
        if (noiseHz != null) {
            Checks.range("--noise", noiseHz, 0, 100);
        }
        if (!transport.equals("tcp") && !transport.equals("udp")) {
            throw new IllegalArgumentException("--transport=" + transport + ": expected tcp or udp");
        }
        ClientTls clientTls = tls.clientTls();
        if (clientTls != null && transport.equals("udp")) {
            throw new IllegalArgumentException("--tls-ca: TLS covers TCP only, not --transport=udp");
        }
        SyntheticFeed feed = new SyntheticFeed(kind, width, height, noiseHz, seed);
        long sent;
        long start = System.nanoTime();
        boolean sendFrames = frames && transport.equals("tcp");
        SensorHello hello = SensorClient.hello(id, width, height, sendFrames, token);
        try (RecordingWriter recording = recordTo == null ? null : RecordingWriter.create(recordTo, id, hello,
                "afterglow feed", System.currentTimeMillis() * 1000, RecordingWriter.Settings.keepAll())) {
            SyntheticFeed.Sink record = null;
            if (recording != null) {
                recording.write(0, Envelope.newBuilder().setSchemaVersion(1).setHello(hello).build());
                record = SyntheticFeed.recording(recording, id);
            }
            if (!toNode) {
                sent = feed.run(record, id, seconds, packetUs, speed, sendFrames);
            } else if (transport.equals("tcp")) {
                try (SensorClient c = SensorClient.connect(target.host(), target.port(), hello, clientTls)) {
                    SyntheticFeed.Sink tcp = SyntheticFeed.tcp(c);
                    sent = feed.run(record == null ? tcp : SyntheticFeed.both(tcp, record), id, seconds, packetUs, speed, sendFrames);
                }
            } else {
                try (UdpSensorClient c = new UdpSensorClient(target.host(), target.port(), id, token)) {
                    SyntheticFeed.Sink udp = SyntheticFeed.udp(c);
                    sent = feed.run(record == null ? udp : SyntheticFeed.both(udp, record), id, seconds, packetUs, speed, false);
                }
            }
        }
        double wall = (System.nanoTime() - start) * 1e-9;
        System.out.printf(Locale.ROOT, "afterglow feed: sent %d events in %.1f s (%.2f M events/s)%n", sent, wall, sent / wall / 1e6);
        return 0;
    }
}
