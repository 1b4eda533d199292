package dev.afterglow.node.config;

import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.ChainSpecException;
import dev.afterglow.filters.chain.DefaultChains;
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
    /** The chain setting that picks the default chain by whether the sensor sends frames. */
    public static final String AUTO = "auto";

    /**
     * Chain description, or {@value #AUTO}: {@link DefaultChains#WITH_FRAMES} once the sensor's
     * hello says it sends frames (or its first frame arrives), {@link DefaultChains#EVENTS_ONLY}
     * until then.
     */
    public String chain = AUTO;
    /** Whether the sensor is known to send frames (from its hello or its frames); picks the automatic chain. */
    boolean sendsFrames;
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

    /** Recording of what the sensor sends; null: none. */
    public RecordConfig record;

    /** What a full queue does to this sensor's TCP packets: shed them (counted), or stop reading its connection until the queue drains. */
    public static final String SHED = "shed";
    /** See {@link #SHED}. */
    public static final String BACKPRESSURE = "backpressure";
    /**
     * {@value #SHED} (default: a live sensor never waits for the node) or {@value #BACKPRESSURE}: the
     * node stops reading the sensor's TCP connection while half its queue is taken and reads on once
     * the queue has drained, so a source that is not live (a replay as fast as the node takes it, a
     * file feeder) loses nothing. UDP and the event topic always shed.
     */
    public String overload = SHED;

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
        if (record != null) {
            record.validate(at + ".record");
        }
        if (!SHED.equals(overload) && !BACKPRESSURE.equals(overload)) {
            throw new ConfigException(at + ".overload must be " + SHED + " or " + BACKPRESSURE + ", not " + overload);
        }
        if (chain == null || chain.isBlank()) {
            chain = AUTO;
        }
        try {
            chainSpec = resolve();
        } catch (ChainSpecException e) {
            throw new ConfigException(at + ".chain: " + e.getMessage(), e);
        }
    }

    /** The parsed chain; for {@value #AUTO}, the default for a sensor that does or does not send frames. */
    public ChainSpec chainSpec() {
        if (chainSpec == null) {
            chainSpec = resolve();
        }
        return chainSpec;
    }

    private ChainSpec resolve() {
        return automaticChain() ? DefaultChains.forSensor(sendsFrames) : ChainSpec.parse(chain);
    }

    /** True when the chain is {@value #AUTO}: chosen by whether the sensor sends frames. */
    public boolean automaticChain() {
        return AUTO.equals(chain.trim());
    }

    /** Whether the sensor is known to send frames. */
    public boolean sendsFrames() {
        return sendsFrames;
    }

    /** Sets the chain description (or {@value #AUTO}); parsed on next use or by {@link #validate}. */
    public void setChain(String text) {
        chain = text;
        chainSpec = null;
    }

    /** A copy that knows whether the sensor sends frames (an automatic chain follows it). */
    public SensorConfig withSendsFrames(boolean frames) {
        SensorConfig c = copy();
        c.sendsFrames = frames;
        c.chainSpec = null;
        return c;
    }

    /** Sources allowed to send this sensor unsealed UDP datagrams. */
    public AddressFilter udpSources() {
        if (udpSources == null) {
            udpSources = AddressFilter.parse("udp-from", udpFrom);
        }
        return udpSources;
    }

    /** True when a full queue pauses the sensor's TCP connection instead of shedding its packets. */
    public boolean backpressure() {
        return BACKPRESSURE.equals(overload);
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
        c.sendsFrames = sendsFrames;
        c.token = token;
        c.udpFrom = new ArrayList<>(udpFrom);
        c.udpSources = udpSources;
        c.record = record == null ? null : record.copy();
        c.overload = overload;
        return c;
    }
}
