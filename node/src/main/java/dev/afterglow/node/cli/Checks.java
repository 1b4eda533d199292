package dev.afterglow.node.cli;

/** Option checks with one-line messages naming the option, its value and the limit. */
final class Checks {
    private Checks() {
    }

    static void range(String option, double value, double min, double max) {
        if (!(value >= min && value <= max)) {
            throw new IllegalArgumentException(option + "=" + value + " outside [" + trim(min) + ", " + trim(max) + "]");
        }
    }

    private static String trim(double v) {
        return v == Math.rint(v) ? Long.toString((long) v) : Double.toString(v);
    }
}
