package dev.afterglow.node.config;

import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.ChainSpecException;
import java.util.ArrayList;
import java.util.List;

/** One sensor's geometry and processing: chain, frame rate, latency budget. */
public final class SensorConfig {
    /** Sensor id as sent in its hello. */
    public String id;
    /** Sensor width in pixels; 0 for the defaults entry (taken from the hello). */
    public int width;
    /** Sensor height in pixels; 0 for the defaults entry. */
    public int height;
    /** Chain description. */
    public String chain = "refractory(period=100us) | background-activity(window=5ms) | high-pass(cutoff=3rad/s, contrast=0.2)";
    /** Frames per second read out, in sensor time. */
    public double frameRateHz = 50;
    /** Extra frame after this many applied events since the last one; 0: off. */
    public int readoutEveryEvents;
    /** Packets whose events are older than this (mapped to host time) when processed are shed. */
    public double latencyBudgetMs = 50;
    /** Tone map of 8-bit frames: "percentile LOW HIGH" or "fixed LOWLOG HIGHLOG". */
    public String toneMap = "percentile 1 99";
    /**
     * Shared secret: when set, the sensor's hello must carry it, and its UDP datagrams must be
     * sealed with it (HMAC-SHA256); at least 16 characters.
     */
    public String token = "";
    /** Source networks (CIDR) from which unsealed UDP datagrams are accepted for this sensor. */
    public List<String> udpFrom = new ArrayList<>(List.of("127.0.0.0/8", "::1/128"));

    /** Parsed {@link #udpFrom}; valid after {@link #validate}. */
    AddressFilter udpSources;

    /** Parsed chain; valid after {@link #validate}. */
    ChainSpec chainSpec;

    /** Checks every setting of a listed sensor; {@code at} prefixes the setting in messages. */
    public void validate(String at) {
        validate(at, true);
    }

    void validate(String at, boolean geometryRequired) {
        if (geometryRequired) {
            Checks.present(at + ".id", id);
            Checks.range(at + ".width", width, 1, 32768);
            Checks.range(at + ".height", height, 1, 32768);
        }
        Checks.range(at + ".frame-rate-hz", frameRateHz, 1, 1000);
        Checks.range(at + ".readout-every-events", readoutEveryEvents, 0, 100_000_000);
        Checks.range(at + ".latency-budget-ms", latencyBudgetMs, 1, 10_000);
        ToneMapText.parse(at + ".tone-map", toneMap);
        if (token == null) {
            token = "";
        }
        if (!token.isEmpty()) {
            Checks.secret(at + ".token", token);
        }
        if (udpFrom == null) {
            udpFrom = new ArrayList<>();
        }
        udpSources = AddressFilter.parse(at + ".udp-from", udpFrom);
        try {
            chainSpec = ChainSpec.parse(chain);
        } catch (ChainSpecException e) {
            throw new ConfigException(at + ".chain: " + e.getMessage(), e);
        }
    }

    /** The parsed chain. */
    public ChainSpec chainSpec() {
        if (chainSpec == null) {
            chainSpec = ChainSpec.parse(chain);
        }
        return chainSpec;
    }

    /** Sources allowed to send this sensor unsealed UDP datagrams. */
    public AddressFilter udpSources() {
        if (udpSources == null) {
            udpSources = AddressFilter.parse("udp-from", udpFrom);
        }
        return udpSources;
    }

    /** True when the sensor must authenticate (hello token, sealed datagrams). */
    public boolean hasToken() {
        return token != null && !token.isEmpty();
    }

    /** A copy of these settings. */
    public SensorConfig copy() {
        return forSensor(id, width, height);
    }

    /** A copy for sensor {@code newId} of the given geometry (used for unlisted sensors). */
    public SensorConfig forSensor(String newId, int newWidth, int newHeight) {
        SensorConfig c = new SensorConfig();
        c.id = newId;
        c.width = newWidth;
        c.height = newHeight;
        c.chain = chain;
        c.frameRateHz = frameRateHz;
        c.readoutEveryEvents = readoutEveryEvents;
        c.latencyBudgetMs = latencyBudgetMs;
        c.toneMap = toneMap;
        c.chainSpec = chainSpec;
        c.token = token;
        c.udpFrom = new ArrayList<>(udpFrom);
        c.udpSources = udpSources;
        return c;
    }
}
