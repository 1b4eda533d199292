package dev.afterglow.node.cli;

import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.time.Duration;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/** Pins a sensor's flight recording under a name, through the node's HTTP control endpoint. */
@Command(name = "pin", mixinStandardHelpOptions = true, sortOptions = false,
        description = {"Keep what a sensor's flight recorder holds now: the node copies the segments on disk",
                "into RECORD-FOLDER/SENSOR-ID/pinned/NAME/, where the recorder never deletes them.",
                "Needs control.enabled in the node's config; set AFTERGLOW_CONTROL_TOKEN if it has a control.token."})
public final class PinCommand implements Callable<Integer> {
    @Option(names = "--http", paramLabel = "HOST:PORT", description = "Node's HTTP port. Default: ${DEFAULT-VALUE}")
    String http = "127.0.0.1:7380";

    @Option(names = "--sensor-id", required = true, description = "The sensor whose recording to pin.")
    String sensorId;

    @Option(names = "--name", required = true, description = "Name of the pinned copy: 1 to 100 of A-Z a-z 0-9 . _ -")
    String name;

    @Override
    public Integer call() throws Exception {
        HostPort target = HostPort.parse("--http", http);
        String body = "{\"name\": \"" + name.replace("\\", "\\\\").replace("\"", "\\\"") + "\"}";
        HttpRequest.Builder request = HttpRequest.newBuilder(URI.create("http://" + target.host() + ":" + target.port()
                        + "/config/sensors/" + java.net.URLEncoder.encode(sensorId, java.nio.charset.StandardCharsets.UTF_8) + "/pin"))
                .timeout(Duration.ofSeconds(90))
                .POST(HttpRequest.BodyPublishers.ofString(body));
        String token = System.getenv().getOrDefault("AFTERGLOW_CONTROL_TOKEN", "");
        if (!token.isEmpty()) {
            request.header("Authorization", "Bearer " + token);
        }
        HttpResponse<String> r = HttpClient.newHttpClient().send(request.build(), HttpResponse.BodyHandlers.ofString());
        if (r.statusCode() != 200) {
            System.err.println("afterglow pin: " + r.statusCode() + ": " + r.body().trim());
            return 1;
        }
        System.out.println(r.body().trim());
        return 0;
    }
}
