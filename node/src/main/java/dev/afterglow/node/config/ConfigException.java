package dev.afterglow.node.config;

/** A configuration value out of range or unreadable; the message names the setting, the value and the limit. */
public final class ConfigException extends IllegalArgumentException {
    public ConfigException(String message) {
        super(message);
    }

    public ConfigException(String message, Throwable cause) {
        super(message, cause);
    }
}
