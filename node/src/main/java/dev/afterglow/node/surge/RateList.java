package dev.afterglow.node.surge;

import java.util.ArrayList;
import java.util.List;

/**
 * A sweep of offered rates in events per second per sensor, parsed from text such as
 * {@code 250k,1M,2.5M,max}: plain numbers, {@code k} (thousand) or {@code M} (million) suffixes, and
 * {@code max} for "as fast as the sender can". Each entry is one step of the sweep, in the given order.
 */
public final class RateList {
    /** Lowest rate accepted, events/s per sensor. */
    public static final double MIN_RATE = 1_000;
    /** Highest rate accepted, events/s per sensor; also the event density of a {@code max} step's packets. */
    public static final double MAX_RATE = 100_000_000;
    /** Marks a {@code max} step in {@link #rates()}. */
    public static final double MAX = Double.POSITIVE_INFINITY;

    private final List<Double> rates;
    private final List<String> labels;

    private RateList(List<Double> rates, List<String> labels) {
        this.rates = List.copyOf(rates);
        this.labels = List.copyOf(labels);
    }

    /**
     * Parses {@code text} given for {@code option}.
     *
     * @throws IllegalArgumentException naming the option, the text and what is wrong
     */
    public static RateList parse(String option, String text) {
        String prefix = option + "=" + text + ": ";
        if (text == null || text.isBlank()) {
            throw new IllegalArgumentException(prefix + "expected a comma-separated list such as 1M,2M,max");
        }
        List<Double> rates = new ArrayList<>();
        List<String> labels = new ArrayList<>();
        for (String raw : text.split(",", -1)) {
            String entry = raw.trim();
            if (entry.isEmpty()) {
                throw new IllegalArgumentException(prefix + "empty entry");
            }
            if (entry.equalsIgnoreCase("max")) {
                rates.add(MAX);
                labels.add("max");
                continue;
            }
            double scale = 1;
            String number = entry;
            char last = entry.charAt(entry.length() - 1);
            if (last == 'k' || last == 'K') {
                scale = 1e3;
                number = entry.substring(0, entry.length() - 1);
            } else if (last == 'M') {
                scale = 1e6;
                number = entry.substring(0, entry.length() - 1);
            }
            double value;
            try {
                value = Double.parseDouble(number) * scale;
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException(prefix + "'" + entry + "' is not a rate (e.g. 250k, 1.5M, 2000000 or max)");
            }
            if (!(value >= MIN_RATE && value <= MAX_RATE)) {
                throw new IllegalArgumentException(prefix + entry + " outside [1k, 100M] events/s per sensor");
            }
            rates.add(value);
            labels.add(entry);
        }
        return new RateList(rates, labels);
    }

    /** Rates in events/s per sensor, {@link #MAX} for a {@code max} step. */
    public List<Double> rates() {
        return rates;
    }

    /** The entries as written (for the report). */
    public List<String> labels() {
        return labels;
    }

    /** Number of steps. */
    public int size() {
        return rates.size();
    }

    @Override
    public String toString() {
        return String.join(",", labels);
    }
}
