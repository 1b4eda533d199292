package dev.afterglow.node.publish;

import dev.afterglow.node.config.AccessConfig;
import dev.afterglow.node.pipeline.SensorRegistry;
import java.util.List;

/**
 * Subscriber tokens: when the configuration lists any, a {@code Subscribe} must carry one of them
 * (compared in constant time), and that token must cover the sensor asked for. Immutable.
 */
public final class SubscriberAccess {
    private final List<AccessConfig.SubscriberToken> tokens;

    public SubscriberAccess(List<AccessConfig.SubscriberToken> tokens) {
        this.tokens = List.copyOf(tokens);
    }

    /** What is wrong with a subscription carrying {@code token} for {@code sensorId}, or null if it may go on. */
    public String check(String token, String sensorId) {
        if (tokens.isEmpty()) {
            return null;
        }
        if (token.isEmpty()) {
            return "this node requires a subscriber token";
        }
        AccessConfig.SubscriberToken match = null;
        for (AccessConfig.SubscriberToken t : tokens) {
            if (SensorRegistry.tokenMatches(t.token, token)) { // every entry compared: no early exit on a match
                match = t;
            }
        }
        if (match == null) {
            return "wrong subscriber token";
        }
        if (!match.sensors.isEmpty() && !match.sensors.contains(sensorId)) {
            return "token " + match.name + " does not cover sensor " + sensorId;
        }
        return null;
    }
}
