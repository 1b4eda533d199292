package dev.afterglow.node.cli;

import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.proto.v1.PixelFormat;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** Acts as a subscriber: prints per-frame numbers and optionally saves frames as PNG. */
@Command(name = "watch", mixinStandardHelpOptions = true,
        description = "Act as a subscriber: print one line per frame, optionally save frames as PNG.")
public final class WatchCommand implements Callable<Integer> {

    @Option(names = "--node", paramLabel = "HOST:PORT", description = "Node's subscriber port. Default: ${DEFAULT-VALUE}")
    String node = "127.0.0.1:7303";

    @Option(names = "--sensor-id", description = "Sensor to watch. Default: ${DEFAULT-VALUE}")
    String sensorId = "parcel-line";

    @Option(names = "--rate", description = "Frames per second wanted, 0 (all) .. 1000. Default: ${DEFAULT-VALUE}")
    double rate = 10;

    @Option(names = "--format", description = "gray8 or log-f32. Default: ${DEFAULT-VALUE}")
    String format = "gray8";

    @Option(names = "--region", paramLabel = "X,Y,W,H", description = "Region of the sensor (default: all).")
    String region;

    @Option(names = "--downscale", description = "Box downscale factor 1 .. 16. Default: ${DEFAULT-VALUE}")
    int downscale = 1;

    @Option(names = "--count", description = "Stop after this many frames, 0 (never) .. 1e9. Default: ${DEFAULT-VALUE}")
    long count = 0;

    @Option(names = "--save", paramLabel = "DIR", description = "Save frames as PNG into DIR.")
    Path save;

    @Option(names = "--save-every", description = "With --save: every N-th frame, 1 .. 100000. Default: ${DEFAULT-VALUE}")
    int saveEvery = 1;

    @Mixin
    TlsOptions tls = new TlsOptions();

    @Override
    public Integer call() throws Exception {
        HostPort target = HostPort.parse("--node", node);
        Checks.range("--rate", rate, 0, 1000);
        Checks.range("--downscale", downscale, 1, 16);
        Checks.range("--count", count, 0, 1e9);
        Checks.range("--save-every", saveEvery, 1, 100_000);
        PixelFormat f = switch (format) {
            case "gray8" -> PixelFormat.PIXEL_FORMAT_GRAY8;
            case "log-f32" -> PixelFormat.PIXEL_FORMAT_LOG_F32;
            default -> throw new IllegalArgumentException("--format=" + format + ": expected gray8 or log-f32");
        };
        int[] r = {0, 0, 0, 0};
        if (region != null) {
            String[] parts = region.split(",");
            if (parts.length != 4) {
                throw new IllegalArgumentException("--region=" + region + ": expected X,Y,W,H");
            }
            try {
                for (int i = 0; i < 4; i++) {
                    r[i] = Integer.parseInt(parts[i].trim());
                }
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException("--region=" + region + ": expected four whole numbers");
            }
        }
        try (SubscriberClient client = SubscriberClient.connect(target.host(), target.port(),
                SubscriberClient.request(sensorId, rate, f, r[0], r[1], r[2], r[3], downscale).toBuilder()
                        .setToken(System.getenv().getOrDefault("AFTERGLOW_SUBSCRIBER_TOKEN", "")).build(), tls.clientTls())) {
            new FrameWatcher(client, System.out, save, saveEvery).run(count);
        } catch (SubscriberClient.RefusedException e) {
            System.err.println("afterglow watch: the node refused: " + e.getMessage());
            return 1;
        }
        return 0;
    }
}
