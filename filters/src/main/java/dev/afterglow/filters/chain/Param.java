package dev.afterglow.filters.chain;

/**
 * One parameter of a stage kind: its key, unit, default and inclusive limits (in canonical units).
 *
 * @param key name as written in a description
 * @param unit kind of quantity
 * @param defaultValue value when the description omits it
 * @param min smallest accepted value
 * @param max largest accepted value
 * @param help one line for documentation
 */
record Param(String key, Unit unit, double defaultValue, double min, double max, String help) {

    /** Checks {@code value} against the limits; the message names setting, value and limit. */
    void check(String stage, double value) {
        String setting = stage + "." + key;
        if (!Double.isFinite(value)) {
            throw new ChainSpecException(setting + "=" + format(value) + ": must be finite");
        }
        if (value < min) {
            throw new ChainSpecException(setting + "=" + format(value) + " < " + format(min));
        }
        if (value > max) {
            throw new ChainSpecException(setting + "=" + format(value) + " > " + format(max));
        }
    }

    /** The value with this parameter's canonical unit, e.g. {@code 2000us}. */
    String format(double value) {
        String number = value == Math.rint(value) && Math.abs(value) < 1e15
                ? Long.toString((long) value)
                : Double.toString(value);
        return number + unit.canonical;
    }
}
