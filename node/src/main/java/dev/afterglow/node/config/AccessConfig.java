package dev.afterglow.node.config;

import com.fasterxml.jackson.annotation.JsonProperty;
import java.util.ArrayList;
import java.util.List;

/**
 * Who may connect: the policy for a second connection with a connected sensor's id, subscriber
 * tokens, and the web origins allowed to open the live view and call JSON endpoints.
 */
public final class AccessConfig {
    /** What happens when a sensor that is connected over TCP says hello again on another connection. */
    public enum DuplicateSensor {
        /** The newcomer is refused; the connected sensor keeps its connection (default). */
        @JsonProperty("refuse")
        REFUSE,
        /** The newcomer replaces the old connection, but only if it authenticates with the sensor's token. */
        @JsonProperty("replace")
        REPLACE
    }

    /** Policy for a duplicate sensor connection. */
    public DuplicateSensor duplicateSensor = DuplicateSensor.REFUSE;
    /** Subscriber tokens; when not empty, every {@code Subscribe} must carry one of them. */
    public List<SubscriberToken> subscriberTokens = new ArrayList<>();
    /**
     * Origins (scheme://host[:port]) besides the node's own that may open {@code /live/ws} and
     * call {@code /config}; requests with any other {@code Origin} header are refused.
     */
    public List<String> allowedOrigins = new ArrayList<>();

    /** One subscriber token: a name for logs and status, the secret, and the sensors it may watch. */
    public static final class SubscriberToken {
        /** Shown in logs and status instead of the secret. */
        public String name;
        /** The secret, at least 16 characters. */
        public String token;
        /** Sensor ids this token may subscribe to; empty: all. */
        public List<String> sensors = new ArrayList<>();
    }

    void validate() {
        if (duplicateSensor == null) {
            duplicateSensor = DuplicateSensor.REFUSE;
        }
        if (subscriberTokens == null) {
            subscriberTokens = new ArrayList<>();
        }
        if (allowedOrigins == null) {
            allowedOrigins = new ArrayList<>();
        }
        for (int i = 0; i < subscriberTokens.size(); i++) {
            SubscriberToken t = subscriberTokens.get(i);
            String at = "access.subscriber-tokens[" + i + "]";
            if (t == null) {
                throw new ConfigException(at + " is empty");
            }
            Checks.present(at + ".name", t.name);
            Checks.secret(at + ".token", t.token);
            if (t.sensors == null) {
                t.sensors = new ArrayList<>();
            }
        }
    }
}
