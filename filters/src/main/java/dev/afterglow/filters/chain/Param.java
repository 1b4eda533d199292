package dev.afterglow.filters.chain;

/**
 * One parameter of a stage kind: its key, unit, default and inclusive limits (in canonical units),
 * or, for a {@link Unit#TEXT} parameter, its default text.
 *
 * @param key name as written in a description
 * @param unit kind of quantity
 * @param defaultValue value when the description omits it (NaN for text)
 * @param min smallest accepted value (NaN for text)
 * @param max largest accepted value (NaN for text)
 * @param defaultText text when the description omits it (null for numbers)
 * @param help one line for documentation
 */
record Param(String key, Unit unit, double defaultValue, double min, double max, String defaultText, String help) {

    /** A numeric parameter. */
    Param(String key, Unit unit, double defaultValue, double min, double max, String help) {
        this(key, unit, defaultValue, min, max, null, help);
    }

    /** A text parameter (a file path or a word), see {@link TextValue}. */
    static Param text(String key, String defaultText, String help) {
        return new Param(key, Unit.TEXT, Double.NaN, Double.NaN, Double.NaN, defaultText, help);
    }

    /** True for a {@link Unit#TEXT} parameter. */
    boolean isText() {
        return unit == Unit.TEXT;
    }

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

    /** Checks a text value ({@link TextValue#check}); the message names the setting. */
    void checkText(String stage, String value) {
        TextValue.check(stage + "." + key, value);
    }

    /** The value with this parameter's canonical unit, e.g. {@code 2000us}. */
    String format(double value) {
        String number = value == Math.rint(value) && Math.abs(value) < 1e15
                ? Long.toString((long) value)
                : Double.toString(value);
        return number + unit.canonical;
    }
}
