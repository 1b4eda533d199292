package dev.afterglow.node.config;

/** Range checks whose messages name the setting, its value and the limit. */
final class Checks {
    private Checks() {
    }

    static void range(String setting, long value, long min, long max) {
        if (value < min) {
            throw new ConfigException(setting + "=" + value + " < " + min);
        }
        if (value > max) {
            throw new ConfigException(setting + "=" + value + " > " + max);
        }
    }

    static void range(String setting, double value, double min, double max) {
        if (!Double.isFinite(value)) {
            throw new ConfigException(setting + "=" + value + " is not a finite number");
        }
        if (value < min) {
            throw new ConfigException(setting + "=" + value + " < " + min);
        }
        if (value > max) {
            throw new ConfigException(setting + "=" + value + " > " + max);
        }
    }

    static void present(String setting, Object value) {
        if (value == null || (value instanceof String s && s.isBlank())) {
            throw new ConfigException(setting + " is required");
        }
    }

    /** A shared secret: present and at least 16 characters (shorter ones are guessable). */
    static void secret(String setting, String value) {
        present(setting, value);
        if (value.strip().length() < 16) {
            throw new ConfigException(setting + " is shorter than 16 characters");
        }
    }
}
