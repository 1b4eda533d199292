package dev.afterglow.node.tls;

import java.util.Arrays;
import java.util.stream.Collectors;

/** The TCP listeners TLS can cover, by the names used in {@code tls.listeners}. */
public enum TlsListener {
    /** Sensors over TCP ({@code listen.ingest-tcp-port}). */
    INGEST("ingest"),
    /** Subscribers ({@code listen.subscriber-port}). */
    SUBSCRIBERS("subscribers"),
    /** HTTP endpoints and the live view ({@code listen.http-port}). */
    HTTP("http");

    private final String configName;

    TlsListener(String configName) {
        this.configName = configName;
    }

    /** The name in {@code tls.listeners}. */
    public String configName() {
        return configName;
    }

    /** The listener with this configuration name, or null. */
    public static TlsListener byName(String name) {
        for (TlsListener l : values()) {
            if (l.configName.equals(name)) {
                return l;
            }
        }
        return null;
    }

    /** "ingest, subscribers or http", for error messages. */
    public static String names() {
        String all = Arrays.stream(values()).map(TlsListener::configName).collect(Collectors.joining(", "));
        int last = all.lastIndexOf(", ");
        return all.substring(0, last) + " or " + all.substring(last + 2);
    }
}
