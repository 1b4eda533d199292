package dev.afterglow.filters.chain;

import java.util.LinkedHashMap;
import java.util.Map;

/**
 * One validated stage of a chain description: its kind and every parameter's value in canonical
 * units (microseconds, rad/s). Immutable.
 */
public final class StageSpec {
    private final StageKind kind;
    private final Map<String, Double> values;

    StageSpec(StageKind kind, Map<String, Double> given) {
        this.kind = kind;
        Map<String, Double> all = new LinkedHashMap<>();
        for (Param p : kind.params()) {
            // + 0.0 turns -0.0 into 0.0: both print as 0, and Double.equals tells them apart, so a
            // written "-0" would otherwise not survive the canonical-text round trip.
            double v = given.getOrDefault(p.key(), p.defaultValue()) + 0.0;
            p.check(kind.label(), v);
            all.put(p.key(), v);
        }
        this.values = all;
        kind.checkTogether(this);
    }

    /** The stage kind. */
    public StageKind kind() {
        return kind;
    }

    /** Value of parameter {@code key} in canonical units. */
    public double get(String key) {
        Double v = values.get(key);
        if (v == null) {
            throw new IllegalArgumentException(kind.label() + " has no parameter " + key);
        }
        return v;
    }

    /** Returns a copy with {@code key} set to {@code value} (canonical units), validated. */
    public StageSpec with(String key, double value) {
        requireKey(key);
        Map<String, Double> copy = new LinkedHashMap<>(values);
        copy.put(key, value);
        return new StageSpec(kind, copy);
    }

    /** Throws {@link ChainSpecException} naming the stage's parameters if it has no {@code key}. */
    void requireKey(String key) {
        if (!values.containsKey(key)) {
            throw new ChainSpecException(kind.label() + "." + key + ": unknown parameter; expected one of " + values.keySet());
        }
    }

    /** Canonical text, e.g. {@code high-pass(cutoff=5rad/s, contrast=0.2)}; parses back to an equal spec. */
    @Override
    public String toString() {
        StringBuilder b = new StringBuilder(kind.label()).append('(');
        boolean first = true;
        for (Param p : kind.params()) {
            if (!first) {
                b.append(", ");
            }
            first = false;
            b.append(p.key()).append('=').append(p.format(values.get(p.key())));
        }
        return b.append(')').toString();
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof StageSpec other && other.kind == kind && other.values.equals(values);
    }

    @Override
    public int hashCode() {
        return kind.hashCode() * 31 + values.hashCode();
    }
}
