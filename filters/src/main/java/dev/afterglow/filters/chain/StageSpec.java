package dev.afterglow.filters.chain;

import java.util.LinkedHashMap;
import java.util.Map;

/**
 * One validated stage of a chain description: its kind and every parameter's value in canonical
 * units (microseconds, rad/s), or as text for text parameters. Immutable.
 */
public final class StageSpec {
    private final StageKind kind;
    private final Map<String, Double> values;
    private final Map<String, String> texts;

    StageSpec(StageKind kind, Map<String, Double> given) {
        this(kind, given, Map.of());
    }

    StageSpec(StageKind kind, Map<String, Double> given, Map<String, String> givenTexts) {
        this.kind = kind;
        Map<String, Double> all = new LinkedHashMap<>();
        Map<String, String> allTexts = new LinkedHashMap<>();
        for (Param p : kind.params()) {
            if (p.isText()) {
                String v = givenTexts.getOrDefault(p.key(), p.defaultText());
                p.checkText(kind.label(), v);
                allTexts.put(p.key(), v);
                continue;
            }
            // + 0.0 turns -0.0 into 0.0: both print as 0, and Double.equals tells them apart, so a
            // written "-0" would otherwise not survive the canonical-text round trip.
            double v = given.getOrDefault(p.key(), p.defaultValue()) + 0.0;
            p.check(kind.label(), v);
            all.put(p.key(), v);
        }
        this.values = all;
        this.texts = allTexts;
        kind.checkTogether(this);
    }

    /** The stage kind. */
    public StageKind kind() {
        return kind;
    }

    /** Value of numeric parameter {@code key} in canonical units. */
    public double get(String key) {
        Double v = values.get(key);
        if (v == null) {
            throw new IllegalArgumentException(kind.label() + " has no numeric parameter " + key);
        }
        return v;
    }

    /** Value of text parameter {@code key}. */
    public String text(String key) {
        String v = texts.get(key);
        if (v == null) {
            throw new IllegalArgumentException(kind.label() + " has no text parameter " + key);
        }
        return v;
    }

    /** Returns a copy with numeric parameter {@code key} set to {@code value} (canonical units), validated. */
    public StageSpec with(String key, double value) {
        requireKey(key);
        if (texts.containsKey(key)) {
            throw new ChainSpecException(kind.label() + "." + key + " is text, not a number");
        }
        Map<String, Double> copy = new LinkedHashMap<>(values);
        copy.put(key, value);
        return new StageSpec(kind, copy, texts);
    }

    /** Returns a copy with text parameter {@code key} set to {@code value}, validated. */
    public StageSpec withText(String key, String value) {
        requireKey(key);
        if (!texts.containsKey(key)) {
            throw new ChainSpecException(kind.label() + "." + key + " is a number, not text");
        }
        Map<String, String> copy = new LinkedHashMap<>(texts);
        copy.put(key, value);
        return new StageSpec(kind, values, copy);
    }

    /** Throws {@link ChainSpecException} naming the stage's parameters if it has no {@code key}. */
    void requireKey(String key) {
        if (!values.containsKey(key) && !texts.containsKey(key)) {
            java.util.List<String> keys = new java.util.ArrayList<>();
            kind.params().forEach(p -> keys.add(p.key()));
            throw new ChainSpecException(kind.label() + "." + key + ": unknown parameter; expected one of " + keys);
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
            b.append(p.key()).append('=').append(p.isText() ? TextValue.format(texts.get(p.key())) : p.format(values.get(p.key())));
        }
        return b.append(')').toString();
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof StageSpec other && other.kind == kind && other.values.equals(values) && other.texts.equals(texts);
    }

    @Override
    public int hashCode() {
        return (kind.hashCode() * 31 + values.hashCode()) * 31 + texts.hashCode();
    }
}
