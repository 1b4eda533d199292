package dev.afterglow.node.cli;

import dev.afterglow.node.client.ClientTls;
import dev.afterglow.node.client.SensorClient;
import dev.afterglow.node.recording.Replayer;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingReader;
import java.nio.file.Path;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** Streams a recording into a running node as a sensor. */
@Command(name = "replay", mixinStandardHelpOptions = true, sortOptions = false,
        description = {"Stream a recording into a running node as a sensor (TCP), keeping its packets and the gaps between them.",
                "For a sensor with a token, set AFTERGLOW_SENSOR_TOKEN: it goes in the hello."})
public final class ReplayCommand implements Callable<Integer> {
    @Option(names = "--in", required = true, description = "A recording: a segment file or the folder of its segments.")
    Path in;

    @Option(names = "--node", paramLabel = "HOST:PORT", description = "Node's TCP sensor port. Default: ${DEFAULT-VALUE}")
    String node = "127.0.0.1:7301";

    @Option(names = "--speed", description = "Recorded seconds per wall second, 0 (as fast as the node takes it) .. 1000. Default: ${DEFAULT-VALUE}")
    double speed = 1;

    @Option(names = "--from", description = "Start at this sensor time in seconds (the index finds it). Default: the start.")
    double fromSeconds;

    @Option(names = "--passes", description = "Play this many times, each pass continuing the sensor's clock, 1 .. 1000000. Default: ${DEFAULT-VALUE}")
    int passes = 1;

    @Option(names = "--sensor-id", description = "Replay as this sensor id. Default: the recorded one.")
    String sensorId;

    @Mixin
    TlsOptions tls = new TlsOptions();

    /** Read from the environment, not an option, so the secret stays out of process listings. */
    String token = System.getenv().getOrDefault("AFTERGLOW_SENSOR_TOKEN", "");

    @Override
    public Integer call() throws Exception {
        HostPort target = HostPort.parse("--node", node);
        Checks.range("--from", fromSeconds, 0, 1e9);
        Replayer replayer = new Replayer(in, speed, Math.round(fromSeconds * 1e6), passes);
        SensorHello hello;
        try (RecordingReader r = RecordingReader.open(in)) {
            hello = r.header().getHello();
        }
        SensorHello.Builder h = hello.toBuilder().setToken(token);
        if (sensorId != null) {
            h.setSensorId(sensorId);
        }
        ClientTls clientTls = tls.clientTls();
        Replayer.Result result;
        try (SensorClient c = SensorClient.connect(target.host(), target.port(), h.build(), clientTls)) {
            result = replayer.run(Replayer.Target.of(c));
        }
        for (String p : result.problems()) {
            System.err.println("afterglow replay: " + p);
        }
        System.out.printf(Locale.ROOT, "afterglow replay: sent %d events in %d packets and %d frames in %.2f s (%.2f M events/s)%n",
                result.events(), result.envelopes() - result.frames(), result.frames(), result.seconds(),
                result.events() / Math.max(1e-9, result.seconds()) / 1e6);
        return 0;
    }
}
