package dev.afterglow.filters.chain;

/** The kinds of quantity a stage parameter takes, with the units accepted for each. */
enum Unit {
    /** Time, stored in microseconds; written with us, ms or s. */
    TIME("us, ms or s", "us"),
    /** Angular frequency, stored in rad/s; written with rad/s or Hz (a = 2πf). */
    FREQUENCY("rad/s or Hz", "rad/s"),
    /**
     * A rate of things per second (events, inferences), stored in Hz; written with Hz, or with
     * rad/s read as an angular frequency (f = a/2π), which is how such rates were once printed.
     */
    RATE("Hz (or rad/s)", "Hz"),
    /** A plain number without unit. */
    NUMBER("no unit", ""),
    /** A whole number without unit. */
    INTEGER("no unit", ""),
    /** Text such as a file path: bare, or in double quotes when it holds other characters (see {@link TextValue}). */
    TEXT("text, in double quotes if it holds characters other than " + TextValue.BARE_CHARACTERS, "");

    final String accepted;
    final String canonical;

    Unit(String accepted, String canonical) {
        this.accepted = accepted;
        this.canonical = canonical;
    }

    /**
     * Converts {@code number} written with {@code suffix} to this kind's canonical unit.
     *
     * @throws ChainSpecException if the suffix is not accepted
     */
    double convert(String setting, String text, double number, String suffix) {
        switch (this) {
            case TIME:
                switch (suffix) {
                    case "us": return number;
                    case "ms": return number * 1e3;
                    case "s": return number * 1e6;
                    default: throw bad(setting, text);
                }
            case FREQUENCY:
                switch (suffix) {
                    case "rad/s": return number;
                    case "Hz": return number * 2 * Math.PI;
                    default: throw bad(setting, text);
                }
            case RATE:
                switch (suffix) {
                    case "Hz": return number;
                    case "rad/s": return number / (2 * Math.PI);
                    default: throw bad(setting, text);
                }
            case INTEGER:
                if (!suffix.isEmpty()) {
                    throw bad(setting, text);
                }
                if (number != Math.rint(number)) {
                    throw new ChainSpecException(setting + "=" + text + ": must be a whole number");
                }
                return number;
            default:
                if (!suffix.isEmpty()) {
                    throw bad(setting, text);
                }
                return number;
        }
    }

    private ChainSpecException bad(String setting, String text) {
        return new ChainSpecException(setting + "=" + text + ": unit must be " + accepted);
    }
}
