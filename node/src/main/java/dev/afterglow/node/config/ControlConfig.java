package dev.afterglow.node.config;

import java.net.InetAddress;
import java.net.UnknownHostException;

/**
 * Run-time configuration over HTTP ({@code /config/sensors/ID}): off unless enabled. With a token,
 * every request must carry {@code Authorization: Bearer TOKEN}. Enabling it on a non-loopback
 * address without a token is refused at start.
 */
public final class ControlConfig {
    /** Whether {@code /config/...} answers at all (403 otherwise). */
    public boolean enabled;
    /** Bearer token required on every {@code /config} request; empty: none (loopback only). */
    public String token = "";

    void validate(ListenConfig listen) {
        if (token == null) {
            token = "";
        }
        if (!token.isEmpty() && token.strip().length() < 16) {
            throw new ConfigException("control.token is shorter than 16 characters");
        }
        if (enabled && token.isEmpty() && !loopback(listen.address)) {
            throw new ConfigException("control.enabled with listen.address=" + listen.address
                    + " needs control.token (without one, run-time changes are allowed on loopback only)");
        }
    }

    private static boolean loopback(String address) {
        try {
            return InetAddress.getByName(address).isLoopbackAddress();
        } catch (UnknownHostException e) {
            return false;
        }
    }
}
