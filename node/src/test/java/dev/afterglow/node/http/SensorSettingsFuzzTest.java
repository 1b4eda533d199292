package dev.afterglow.node.http;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.DefaultChains;
import dev.afterglow.filters.fuzz.FuzzInputs;
import dev.afterglow.filters.fuzz.FuzzTarget;
import dev.afterglow.node.config.SensorConfig;
import io.netty.handler.codec.http.HttpResponseStatus;
import java.math.BigDecimal;
import java.math.BigInteger;
import java.util.List;
import java.util.Random;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * Fuzz target for the body of {@code PATCH /config/sensors/ID} ({@link SensorSettingsEndpoint#validate}):
 * JSON objects with known, misspelt and unknown settings holding values of every JSON type
 * (numbers far out of range, huge integers, chain descriptions and parameter changes near and off
 * the grammar), plus edited, truncated, deeply nested and non-JSON text. Every body must give
 * either settings that pass validation, differ from the current ones only where the body asked,
 * and say correctly whether the chain changed, or a 400 with a message; the current settings
 * never change, and nothing is thrown.
 */
@FuzzTarget
class SensorSettingsFuzzTest {
    private static final ObjectMapper JSON = new ObjectMapper();
    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;
    private static final String[] KEYS = {"chain", "set", "frame-rate-hz", "readout-every-events",
        "latency-budget-ms", "tone-map", "frame-rate", "Chain", "id", "width", ""};
    private static final String[] CHAINS = {"auto", " auto ",
        "refractory(period=100us) | background-activity(window=5ms) | high-pass(cutoff=3rad/s, contrast=0.2)",
        "high-pass", "direct-integration(contrast=0.3)", "hot-pixel | correlation(window=2ms, support=3) | complementary",
        "refractory | refractory(period=2ms) | high-pass(cutoff=2Hz)", "background-activity(window=5ms) | high-pass(cutoff=3rad/s)"};
    private static final String[] SET_KEYS = {"high-pass.cutoff", "high-pass.contrast", "refractory.period",
        "background-activity.window", "0.period", "1.window", "2.cutoff", "3.cutoff", "99999999999.window",
        "2147483648.period", "-1.period", "١.window", ".period", "refractory.", "refractory", "x.y.z",
        "complementary.dark", "0.", "00.period", "hot-pixel.learn", "high-pass.nothing"};
    private static final String[] PARAM_TEXT = {"5ms", "2Hz", "3rad/s", "0.2", "-1rad/s", "1e999Hz", "5ms, contrast=0.3",
        "5ms) | high-pass(", "", " 7 us ", "NaN", "0x10", "1e-400s", "-0.0rad/s", "100"};
    private static final String[] TONE_MAPS = {"percentile 1 99", "fixed -3 3", "fixed -3 3 gamma", "percentile 99 1",
        "percentile NaN 5", "percentile -1 101", "fixed 1 Infinity", "percentile", "log 1 2", "percentile 1 99 gamma extra"};
    private static final String JSON_ALPHABET = "{}[]\":,0123456789.eE-+ trufalsn\\\u00e9";

    /** The settings in effect before each body, as a sensor listed in the YAML would have them. */
    private static SensorConfig current() {
        SensorConfig c = new SensorConfig();
        c.id = "cam";
        c.width = 640;
        c.height = 480;
        c.validate("cam");
        return c;
    }

    @Property
    void everyBodyGivesValidatedSettingsOrA400WithAMessage(@ForAll("bodies") String body) throws Exception {
        SensorConfig current = current();
        String before = describe(current);

        SensorSettingsEndpoint.Change change = SensorSettingsEndpoint.validate(JSON, "cam", current, body);

        assertEquals(before, describe(current), "the settings in effect are untouched");
        if (change.refused() != null) {
            assertNull(change.next());
            assertEquals(HttpResponseStatus.BAD_REQUEST, change.refused().status());
            assertFalse(change.refused().body().isBlank(), "a 400 says why");
            return;
        }
        SensorConfig next = change.next();
        assertNotNull(next);
        next.validate("cam");
        assertEquals(next.automaticChain() ? DefaultChains.forSensor(next.sendsFrames()) : ChainSpec.parse(next.chain),
                next.chainSpec(), "the chain text (or auto) and its parsed form agree");
        assertEquals(!next.chainSpec().equals(current.chainSpec()), change.chainChanged(), "chain-restarted is right");
        assertTrue(next.frameRateHz >= 1 && next.frameRateHz <= 1000, "frame-rate-hz in range");
        assertTrue(next.latencyBudgetMs >= 1 && next.latencyBudgetMs <= 10_000, "latency-budget-ms in range");
        assertTrue(next.readoutEveryEvents >= 0 && next.readoutEveryEvents <= 100_000_000, "readout-every-events in range");
        assertEquals(List.of(current.id, current.width, current.height), List.of(next.id, next.width, next.height));

        JsonNode request = JSON.readTree(body);
        if (!request.has("frame-rate-hz")) {
            assertEquals(current.frameRateHz, next.frameRateHz);
        } else {
            assertEquals(request.get("frame-rate-hz").doubleValue(), next.frameRateHz);
        }
        if (!request.has("latency-budget-ms")) {
            assertEquals(current.latencyBudgetMs, next.latencyBudgetMs);
        } else {
            assertEquals(request.get("latency-budget-ms").doubleValue(), next.latencyBudgetMs);
        }
        if (!request.has("readout-every-events")) {
            assertEquals(current.readoutEveryEvents, next.readoutEveryEvents);
        } else {
            assertEquals(request.get("readout-every-events").intValue(), next.readoutEveryEvents);
        }
        assertEquals(request.has("tone-map") ? request.get("tone-map").textValue() : current.toneMap, next.toneMap);
        if (!request.has("chain") && !request.has("set")) {
            assertEquals(current.chain, next.chain);
        } else if (request.has("chain") && !request.has("set")) {
            assertEquals(request.get("chain").textValue(), next.chain);
        }
    }

    private static String describe(SensorConfig c) {
        return List.of(c.id, c.width, c.height, c.chain, c.frameRateHz, c.readoutEveryEvents, c.latencyBudgetMs,
                c.toneMap, String.valueOf(c.chainSpec())).toString();
    }

    @Provide
    Arbitrary<String> bodies() {
        return FuzzInputs.from(r -> {
            switch (r.nextInt(10)) {
                case 0:
                    return FuzzInputs.edit(r, write(settings(r)), JSON_ALPHABET);
                case 1:
                    String whole = write(settings(r));
                    return whole.substring(0, r.nextInt(whole.length() + 1));
                case 2:
                    return weird(r);
                default:
                    return write(settings(r));
            }
        });
    }

    private static String write(JsonNode node) {
        try {
            return JSON.writeValueAsString(node);
        } catch (com.fasterxml.jackson.core.JsonProcessingException e) {
            throw new IllegalStateException(e);
        }
    }

    /** A JSON object of settings: mostly known keys with plausible values, some of any type. */
    private static ObjectNode settings(Random r) {
        ObjectNode o = NODES.objectNode();
        for (int n = r.nextInt(5); n > 0; n--) {
            String key = r.nextInt(8) == 0 ? FuzzInputs.oneOf(r, KEYS) : FuzzInputs.oneOf(r, KEYS[0], KEYS[1], KEYS[2],
                    KEYS[3], KEYS[4], KEYS[5]);
            o.set(key, r.nextInt(4) == 0 ? anyValue(r, 0) : plausible(r, key));
        }
        return o;
    }

    private static JsonNode plausible(Random r, String key) {
        return switch (key) {
            case "chain" -> NODES.textNode(r.nextInt(3) == 0
                    ? FuzzInputs.edit(r, FuzzInputs.oneOf(r, CHAINS), "abcdefhilmnoprstuwz-()|,=.0123456789 ")
                    : FuzzInputs.oneOf(r, CHAINS));
            case "set" -> {
                ObjectNode set = NODES.objectNode();
                for (int n = r.nextInt(4); n > 0; n--) {
                    set.set(FuzzInputs.oneOf(r, SET_KEYS), r.nextInt(5) == 0 ? anyValue(r, 1)
                            : NODES.textNode(FuzzInputs.oneOf(r, PARAM_TEXT)));
                }
                yield set;
            }
            case "tone-map" -> NODES.textNode(FuzzInputs.oneOf(r, TONE_MAPS));
            case "readout-every-events" -> r.nextBoolean() ? NODES.numberNode(r.nextInt(200_000_001) - 1)
                    : number(r);
            default -> r.nextBoolean() ? NODES.numberNode(r.nextDouble() * 12_000 - 1000) : number(r);
        };
    }

    /** Numbers at and beyond every edge: huge integers, exponents past double, fractions, negative zero. */
    private static JsonNode number(Random r) {
        return switch (r.nextInt(7)) {
            case 0 -> NODES.numberNode(FuzzInputs.oneOf(r, 0, 1, -1, 1000, 1001, 10_000, 10_001, 100_000_000,
                    100_000_001, Integer.MAX_VALUE, Integer.MIN_VALUE));
            case 1 -> NODES.numberNode(FuzzInputs.oneOf(r, Long.MAX_VALUE, Long.MIN_VALUE, 1L << 31));
            case 2 -> NODES.numberNode(new BigInteger(100 + r.nextInt(200), r));
            case 3 -> NODES.numberNode(new BigDecimal(FuzzInputs.oneOf(r, "1e400", "-1e400", "1e-400", "0.5", "999.99999999999999999",
                    "-0.0", "1E+2")));
            case 4 -> NODES.numberNode(FuzzInputs.oneOf(r, 0.0, -0.0, 0.999, 1.0, 1000.0000001, Double.MIN_VALUE, Double.MAX_VALUE));
            case 5 -> NODES.numberNode(r.nextGaussian() * 1e6);
            default -> NODES.numberNode(r.nextLong());
        };
    }

    /** Any JSON value, nested a little. */
    private static JsonNode anyValue(Random r, int depth) {
        switch (r.nextInt(depth > 2 ? 5 : 7)) {
            case 0:
                return NODES.nullNode();
            case 1:
                return NODES.booleanNode(r.nextBoolean());
            case 2:
                return number(r);
            case 3:
                return NODES.textNode(FuzzInputs.textFrom(r, "abc 0123456789.-|()=,", 20));
            case 4:
                return NODES.textNode(FuzzInputs.oneOf(r, PARAM_TEXT));
            case 5: {
                ArrayNode a = NODES.arrayNode();
                for (int n = r.nextInt(3); n > 0; n--) {
                    a.add(anyValue(r, depth + 1));
                }
                return a;
            }
            default: {
                ObjectNode o = NODES.objectNode();
                for (int n = r.nextInt(3); n > 0; n--) {
                    o.set(FuzzInputs.oneOf(r, SET_KEYS), anyValue(r, depth + 1));
                }
                return o;
            }
        }
    }

    /** Bodies that are not a settings object: deep nesting, long numbers, other JSON types, noise. */
    private static String weird(Random r) {
        return switch (r.nextInt(9)) {
            case 0 -> "[".repeat(1 + r.nextInt(3000));
            case 1 -> "{\"frame-rate-hz\": " + "9".repeat(1 + r.nextInt(5000)) + "}";
            case 2 -> "{\"set\": " + "{\"a.b\": ".repeat(1 + r.nextInt(1500));
            case 3 -> FuzzInputs.oneOf(r, "", " ", "null", "[]", "\"text\"", "42", "{}", "{\"set\": {}}", "{\"chain\": null}");
            case 4 -> new String(FuzzInputs.bytes(r, 64), java.nio.charset.StandardCharsets.UTF_8);
            case 5 -> "{\"frame-rate-hz\": 10, \"frame-rate-hz\": " + FuzzInputs.oneOf(r, "5000", "\"x\"", "20") + "}";
            case 6 -> "{\"chain\": \"" + "high-pass".repeat(1 + r.nextInt(200)) + "\"}";
            case 7 -> "{\"set\": {\"" + "9".repeat(1 + r.nextInt(40)) + ".window\": \"5ms\"}}";
            default -> FuzzInputs.textFrom(r, JSON_ALPHABET, 60);
        };
    }
}
