package dev.afterglow.node.http;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.ChainSpecException;
import dev.afterglow.filters.chain.StageKind;
import dev.afterglow.filters.chain.StageSpec;
import dev.afterglow.filters.learned.LearnedReconstruction;
import dev.afterglow.node.config.ConfigException;
import dev.afterglow.node.config.ControlConfig;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.recording.SensorRecorder;
import dev.afterglow.node.pipeline.SensorRegistry;
import io.netty.handler.codec.http.FullHttpRequest;
import io.netty.handler.codec.http.HttpHeaderNames;
import io.netty.handler.codec.http.HttpMethod;
import io.netty.handler.codec.http.HttpResponseStatus;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.Iterator;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.TimeUnit;

/**
 * Reads and changes a sensor's settings at run time: {@code GET /config/sensors} (all),
 * {@code GET /config/sensors/ID} and {@code PATCH /config/sensors/ID} with a JSON object of the
 * settings to change, named as in the YAML config:
 *
 * <pre>
 * {"frame-rate-hz": 100, "latency-budget-ms": 30, "readout-every-events": 0, "tone-map": "percentile 1 99",
 *  "chain": "background-activity(window=5ms) | high-pass(cutoff=3rad/s)",
 *  "set": {"high-pass.cutoff": "2Hz", "0.window": "8ms"}}
 * </pre>
 *
 * {@code set} changes single chain parameters (by stage name, or by 0-based position when a name
 * repeats), written as in a chain description. The whole change is validated first: an invalid
 * request gets 400 with a message naming the setting, the value and the limit, and nothing
 * changes. A valid one answers 200 with the settings in effect once the sensor's pipeline has
 * applied them (before its next packet or frame). A changed chain starts from a blank image;
 * other changes keep the chain's state.
 *
 * <p>Off unless {@code control.enabled} (403); with {@code control.token}, requests without the
 * matching {@code Authorization: Bearer} header get 401.
 */
public final class SensorSettingsEndpoint {
    /** Path prefix this endpoint serves. */
    public static final String PREFIX = "/config/sensors";
    private static final Set<String> KEYS = Set.of("chain", "set", "frame-rate-hz", "readout-every-events",
            "latency-budget-ms", "tone-map", "recording");
    private static final long APPLY_TIMEOUT_SECONDS = 5;
    /** Suffix of the flight recorder's pin action: POST /config/sensors/ID/pin {"name": "..."}. */
    private static final String PIN = "/pin";

    private final ControlConfig control;
    private final SensorRegistry sensors;
    private final ObjectMapper json;

    public SensorSettingsEndpoint(ControlConfig control, SensorRegistry sensors, ObjectMapper json) {
        this.control = control;
        this.sensors = sensors;
        this.json = json;
    }

    /** A response: status, JSON or text body, and extra headers. */
    public record Reply(HttpResponseStatus status, String contentType, String body, Map<String, String> headers) {
        static Reply text(HttpResponseStatus status, String message) {
            return new Reply(status, "text/plain; charset=utf-8", message + "\n", Map.of());
        }
    }

    /** Handles a request under {@link #PREFIX}; completes once any change has been applied. */
    public CompletableFuture<Reply> handle(FullHttpRequest request, String path) {
        Reply refused = checkAccess(request);
        if (refused != null) {
            return done(refused);
        }
        String rest = path.substring(PREFIX.length());
        if (rest.isEmpty() || rest.equals("/")) {
            return done(HttpMethod.GET.equals(request.method())
                    ? jsonReply(HttpResponseStatus.OK, allSettings())
                    : methodNotAllowed("GET"));
        }
        if (rest.endsWith(PIN)) {
            return pin(request, rest.substring(1, rest.length() - PIN.length()));
        }
        String id = rest.substring(1);
        SensorPipeline pipeline = sensors.get(id);
        if (pipeline == null) {
            return done(Reply.text(HttpResponseStatus.NOT_FOUND, "no sensor '" + id + "'"));
        }
        if (HttpMethod.GET.equals(request.method())) {
            return done(jsonReply(HttpResponseStatus.OK, settings(pipeline.config(), false)));
        }
        if (!HttpMethod.PATCH.equals(request.method())) {
            return done(methodNotAllowed("GET, PATCH"));
        }
        return change(pipeline, request.content().toString(StandardCharsets.UTF_8));
    }

    /** Pins the sensor's recording as it is now under a name; answers with the copies. */
    private CompletableFuture<Reply> pin(FullHttpRequest request, String id) {
        if (!HttpMethod.POST.equals(request.method())) {
            return done(methodNotAllowed("POST"));
        }
        SensorPipeline pipeline = sensors.get(id);
        if (pipeline == null) {
            return done(Reply.text(HttpResponseStatus.NOT_FOUND, "no sensor '" + id + "'"));
        }
        SensorRecorder recorder = pipeline.recorder();
        if (recorder == null) {
            return done(Reply.text(HttpResponseStatus.CONFLICT, "sensor " + id + " is not recording"));
        }
        String name;
        try {
            JsonNode body = json.readTree(request.content().toString(StandardCharsets.UTF_8));
            if (body == null || !body.isObject() || !body.path("name").isTextual()) {
                return done(Reply.text(HttpResponseStatus.BAD_REQUEST, "the body must be {\"name\": \"...\"}"));
            }
            name = body.get("name").asText();
        } catch (IOException e) {
            return done(Reply.text(HttpResponseStatus.BAD_REQUEST, "the body is not valid JSON"));
        }
        return recorder.pin(name).orTimeout(60, TimeUnit.SECONDS).handle((copies, error) -> {
            if (error == null) {
                ObjectNode o = json.createObjectNode();
                o.put("sensor", id).put("name", name);
                ArrayNode files = o.putArray("files");
                copies.forEach(p -> files.add(p.toString()));
                return jsonReply(HttpResponseStatus.OK, o);
            }
            Throwable cause = error instanceof java.util.concurrent.CompletionException && error.getCause() != null ? error.getCause() : error;
            return Reply.text(cause instanceof IllegalArgumentException ? HttpResponseStatus.BAD_REQUEST : HttpResponseStatus.CONFLICT,
                    "pin: " + cause.getMessage());
        });
    }

    private Reply checkAccess(FullHttpRequest request) {
        if (!control.enabled) {
            return Reply.text(HttpResponseStatus.FORBIDDEN,
                    "run-time configuration is off; set control.enabled: true in the node's config");
        }
        if (control.token.isEmpty()) {
            return null;
        }
        String given = request.headers().get(HttpHeaderNames.AUTHORIZATION, "");
        byte[] expected = ("Bearer " + control.token).getBytes(StandardCharsets.UTF_8);
        if (!MessageDigest.isEqual(expected, given.getBytes(StandardCharsets.UTF_8))) { // constant time
            return new Reply(HttpResponseStatus.UNAUTHORIZED, "text/plain; charset=utf-8",
                    "missing or wrong bearer token\n", Map.of("WWW-Authenticate", "Bearer realm=\"afterglow\""));
        }
        return null;
    }

    private CompletableFuture<Reply> change(SensorPipeline pipeline, String body) {
        Change change = validate(json, pipeline.id(), pipeline.config(), body);
        if (change.refused() != null) {
            return done(change.refused());
        }
        ObjectNode answer = settings(change.next(), change.chainChanged());
        CompletableFuture<Void> applied;
        try {
            applied = pipeline.reconfigure(change.next()); // builds the chain: a learned model is loaded and checked here
        } catch (ChainSpecException e) {
            return done(Reply.text(HttpResponseStatus.BAD_REQUEST, "chain: " + e.getMessage()));
        }
        return applied
                .orTimeout(APPLY_TIMEOUT_SECONDS, TimeUnit.SECONDS)
                .handle((ok, error) -> error == null
                        ? jsonReply(HttpResponseStatus.OK, answer)
                        : Reply.text(HttpResponseStatus.SERVICE_UNAVAILABLE,
                                "the sensor's pipeline did not apply the change within " + APPLY_TIMEOUT_SECONDS + " s"));
    }

    /**
     * A PATCH body checked against the settings in effect: either the validated settings to apply
     * ({@code next}, and whether its chain differs) or the 400 answer ({@code refused}).
     */
    record Change(SensorConfig next, boolean chainChanged, Reply refused) {
        static Change refuse(String message) {
            return new Change(null, false, Reply.text(HttpResponseStatus.BAD_REQUEST, message));
        }
    }

    /**
     * Parses a PATCH body and validates the settings it asks for as a whole; {@code current} is not
     * changed. Needs no network or pipeline, so the body parser can be tested (and fuzzed) alone.
     */
    static Change validate(ObjectMapper json, String sensorId, SensorConfig current, String body) {
        try {
            JsonNode request = json.readTree(body);
            if (request == null || !request.isObject()) {
                throw new ConfigException("the body must be a JSON object of settings to change");
            }
            SensorConfig next = apply(current, request);
            next.validate(sensorId);
            checkModelFiles(current.chainSpec(), next.chainSpec());
            return new Change(next, !next.chainSpec().equals(current.chainSpec()), null);
        } catch (IOException e) {
            String why = e instanceof com.fasterxml.jackson.core.JsonProcessingException j ? j.getOriginalMessage() : e.toString();
            return Change.refuse("the body is not valid JSON: " + why);
        } catch (ConfigException | ChainSpecException e) {
            return Change.refuse(e.getMessage());
        }
    }

    /**
     * Over HTTP a learned reconstruction may use the shipped model or a model file already in
     * effect for this sensor, never a new path: the node would otherwise read and parse any file a
     * client names. New model files are set in the node's configuration.
     */
    private static void checkModelFiles(ChainSpec current, ChainSpec next) {
        Set<String> inEffect = new java.util.HashSet<>();
        inEffect.add(LearnedReconstruction.BUILTIN);
        for (StageSpec s : current.stages()) {
            if (s.kind() == StageKind.LEARNED_RECON) {
                inEffect.add(s.text("model"));
            }
        }
        for (StageSpec s : next.stages()) {
            if (s.kind() == StageKind.LEARNED_RECON && !inEffect.contains(s.text("model"))) {
                throw new ConfigException("learned-recon.model=" + s.text("model") + ": over HTTP only builtin or a model "
                        + "file already in effect for this sensor " + new java.util.TreeSet<>(inEffect)
                        + "; set other model files in the node's configuration");
            }
        }
    }

    /** The current settings with the request's changes, not yet validated as a whole. */
    private static SensorConfig apply(SensorConfig current, JsonNode request) {
        SensorConfig next = current.copy();
        for (Iterator<String> it = request.fieldNames(); it.hasNext(); ) {
            String key = it.next();
            if (!KEYS.contains(key)) {
                throw new ConfigException("unknown setting '" + key + "'; expected some of " + new java.util.TreeSet<>(KEYS));
            }
        }
        if (request.has("chain")) {
            next.setChain(text(request, "chain"));
        }
        if (request.has("frame-rate-hz")) {
            next.frameRateHz = number(request, "frame-rate-hz");
        }
        if (request.has("latency-budget-ms")) {
            next.latencyBudgetMs = number(request, "latency-budget-ms");
        }
        if (request.has("readout-every-events")) {
            JsonNode v = request.get("readout-every-events");
            if (!v.isIntegralNumber() || !v.canConvertToInt()) {
                throw new ConfigException("readout-every-events=" + v + " is not a whole number");
            }
            next.readoutEveryEvents = v.intValue();
        }
        if (request.has("tone-map")) {
            next.toneMap = text(request, "tone-map");
        }
        if (request.has("set")) {
            next.setChain(setParameters(next.chainSpec(), request.get("set")).toString()); // an automatic chain becomes explicit
        }
        if (request.has("recording")) {
            JsonNode v = request.get("recording");
            if (!v.isBoolean()) {
                throw new ConfigException("recording=" + v + " is not true or false");
            }
            if (next.record == null) {
                throw new ConfigException("recording: this sensor has no record settings in the node's configuration"
                        + " (where and how to record are set there; over HTTP only on and off)");
            }
            next.record.enabled = v.booleanValue();
        }
        return next;
    }

    private static ChainSpec setParameters(ChainSpec spec, JsonNode set) {
        if (!set.isObject()) {
            throw new ConfigException("set must be an object such as {\"high-pass.cutoff\": \"2Hz\"}");
        }
        ChainSpec result = spec;
        for (Iterator<Map.Entry<String, JsonNode>> it = set.fields(); it.hasNext(); ) {
            Map.Entry<String, JsonNode> e = it.next();
            String name = e.getKey();
            int dot = name.lastIndexOf('.');
            if (dot <= 0 || dot == name.length() - 1) {
                throw new ConfigException("set: '" + name + "' is not STAGE.PARAMETER or POSITION.PARAMETER");
            }
            JsonNode value = e.getValue();
            if (!value.isTextual() && !value.isNumber()) {
                throw new ConfigException("set." + name + " must be a string such as \"5ms\" or a number");
            }
            int index = stageIndex(result, name.substring(0, dot), name);
            result = result.withText(index, name.substring(dot + 1), value.asText());
        }
        return result;
    }

    private static int stageIndex(ChainSpec spec, String stage, String setting) {
        List<StageSpec> stages = spec.stages();
        if (stage.chars().allMatch(Character::isDigit)) {
            int position;
            try {
                position = Integer.parseInt(stage);
            } catch (NumberFormatException tooLarge) { // more digits than an int holds: no such position either
                position = Integer.MAX_VALUE;
            }
            if (position >= stages.size()) {
                throw new ConfigException("set." + setting + ": the chain has positions 0 .. " + (stages.size() - 1));
            }
            return position;
        }
        int found = -1;
        for (int i = 0; i < stages.size(); i++) {
            if (stages.get(i).kind().label().equals(stage)) {
                if (found >= 0) {
                    throw new ConfigException("set." + setting + ": the chain has " + stage + " twice; name it by position");
                }
                found = i;
            }
        }
        if (found < 0) {
            List<String> names = new ArrayList<>();
            stages.forEach(s -> names.add(s.kind().label()));
            throw new ConfigException("set." + setting + ": no stage " + stage + " in the chain " + names);
        }
        return found;
    }

    private static String text(JsonNode request, String key) {
        JsonNode v = request.get(key);
        if (!v.isTextual()) {
            throw new ConfigException(key + " must be a string");
        }
        return v.asText();
    }

    private static double number(JsonNode request, String key) {
        JsonNode v = request.get(key);
        if (!v.isNumber()) {
            throw new ConfigException(key + "=" + v + " is not a number");
        }
        return v.doubleValue();
    }

    private ArrayNode allSettings() {
        ArrayNode list = json.createArrayNode();
        List<SensorPipeline> all = new ArrayList<>(sensors.all());
        all.sort(Comparator.comparing(SensorPipeline::id));
        for (SensorPipeline p : all) {
            list.add(settings(p.config(), false));
        }
        return list;
    }

    private ObjectNode settings(SensorConfig c, boolean chainRestarted) {
        ObjectNode o = json.createObjectNode();
        o.put("id", c.id);
        o.put("width", c.width);
        o.put("height", c.height);
        o.put("chain", c.chainSpec().toString());
        o.put("chain-automatic", c.automaticChain());
        ArrayNode stages = o.putArray("stages");
        List<StageSpec> specs = c.chainSpec().stages();
        for (int i = 0; i < specs.size(); i++) {
            stages.addObject().put("position", i).put("stage", specs.get(i).kind().label()).put("text", specs.get(i).toString());
        }
        o.put("frame-rate-hz", c.frameRateHz);
        o.put("latency-budget-ms", c.latencyBudgetMs);
        o.put("readout-every-events", c.readoutEveryEvents);
        o.put("tone-map", c.toneMap);
        if (c.record != null) {
            o.put("recording", c.record.enabled);
            SensorPipeline p = sensors.get(c.id);
            o.put("recording-status", p == null || p.recorder() == null ? "off" : p.recorder().status());
        }
        if (chainRestarted) {
            o.put("chain-restarted", true);
        }
        return o;
    }

    private Reply jsonReply(HttpResponseStatus status, JsonNode body) {
        try {
            return new Reply(status, "application/json", json.writeValueAsString(body), Map.of());
        } catch (com.fasterxml.jackson.core.JsonProcessingException e) {
            throw new java.io.UncheckedIOException(e);
        }
    }

    private static Reply methodNotAllowed(String allow) {
        return new Reply(HttpResponseStatus.METHOD_NOT_ALLOWED, "text/plain; charset=utf-8", "method not allowed\n",
                Map.of("Allow", allow));
    }

    private static CompletableFuture<Reply> done(Reply r) {
        return CompletableFuture.completedFuture(r);
    }
}
