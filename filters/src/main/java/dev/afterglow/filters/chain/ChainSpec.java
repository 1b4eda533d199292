package dev.afterglow.filters.chain;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * A validated chain description: zero or more denoise stages followed by exactly one
 * reconstruction stage. Immutable; {@link #toString()} gives canonical text that parses back to an
 * equal spec.
 *
 * <pre>
 * chain  := stage ( "|" stage )*
 * stage  := name [ "(" [ param ( "," param )* ] ")" ]
 * param  := key "=" ( number [ unit ] | text )
 * </pre>
 *
 * A text value (a file path, for example) is written bare or in double quotes; see
 * {@link TextValue}. Separators inside quotes belong to the text.
 */
public final class ChainSpec {
    private static final Pattern NAME = Pattern.compile("[a-z][a-z-]*");
    private static final Pattern VALUE = Pattern.compile("([-+]?(?:\\d+\\.?\\d*|\\.\\d+)(?:[eE][-+]?\\d+)?)\\s*([A-Za-z/]*)");

    private final List<StageSpec> stages;

    private ChainSpec(List<StageSpec> stages) {
        this.stages = List.copyOf(stages);
    }

    /** The default chain: refractory, background-activity and high-pass with their defaults. */
    public static ChainSpec defaults() {
        return parse("refractory | background-activity | high-pass");
    }

    /** Builds a spec from stages already validated one by one; checks their order. */
    public static ChainSpec of(List<StageSpec> stages) {
        checkOrder(stages);
        return new ChainSpec(stages);
    }

    /**
     * Parses and validates a description.
     *
     * @throws ChainSpecException naming the position or the setting, its value and the limit
     */
    public static ChainSpec parse(String text) {
        if (text == null || text.isBlank()) {
            throw new ChainSpecException("chain: empty description; expected e.g. \"background-activity | high-pass\"");
        }
        List<StageSpec> stages = new ArrayList<>();
        for (String part : splitTopLevel(text)) {
            stages.add(parseStage(part.trim()));
        }
        checkOrder(stages);
        return new ChainSpec(stages);
    }

    private static List<String> splitTopLevel(String text) {
        List<String> parts = new ArrayList<>();
        int depth = 0;
        int start = 0;
        for (int i = 0; i < text.length(); i++) {
            char c = text.charAt(i);
            if (c == '"') {
                int end = TextValue.skipQuoted(text, i);
                if (end < 0) {
                    throw new ChainSpecException("chain: missing closing '\"' for the quote at position " + i + " in \"" + text.trim() + "\"");
                }
                i = end - 1; // separators inside quotes are text
            } else if (c == '(') {
                depth++;
            } else if (c == ')') {
                depth--;
                if (depth < 0) {
                    throw new ChainSpecException("chain: unbalanced ')' at position " + i);
                }
            } else if (c == '|' && depth == 0) {
                parts.add(text.substring(start, i));
                start = i + 1;
            }
        }
        if (depth != 0) {
            throw new ChainSpecException("chain: missing ')' at end of \"" + text.trim() + "\"");
        }
        parts.add(text.substring(start));
        return parts;
    }

    private static StageSpec parseStage(String text) {
        if (text.isEmpty()) {
            throw new ChainSpecException("chain: empty stage between '|'");
        }
        int open = text.indexOf('(');
        String name = (open < 0 ? text : text.substring(0, open)).trim();
        if (!NAME.matcher(name).matches()) {
            throw new ChainSpecException("chain: \"" + name + "\" is not a stage name; expected one of " + StageKind.labels());
        }
        StageKind kind = StageKind.byLabel(name);
        if (kind == null) {
            throw new ChainSpecException("chain: unknown stage \"" + name + "\"; expected one of " + StageKind.labels());
        }
        Map<String, Double> given = new HashMap<>();
        Map<String, String> givenTexts = new HashMap<>();
        if (open >= 0) {
            if (!text.endsWith(")")) {
                throw new ChainSpecException(name + ": text after ')' in \"" + text + "\"");
            }
            String inner = text.substring(open + 1, text.length() - 1).trim();
            if (!inner.isEmpty()) {
                for (String assignment : splitParams(inner)) {
                    parseParam(kind, assignment.trim(), given, givenTexts);
                }
            }
        }
        return new StageSpec(kind, given, givenTexts);
    }

    /** Splits at commas outside double quotes. */
    private static List<String> splitParams(String inner) {
        List<String> parts = new ArrayList<>();
        int start = 0;
        for (int i = 0; i < inner.length(); i++) {
            char c = inner.charAt(i);
            if (c == '"') {
                int end = TextValue.skipQuoted(inner, i);
                i = (end < 0 ? inner.length() : end) - 1;
            } else if (c == ',') {
                parts.add(inner.substring(start, i));
                start = i + 1;
            }
        }
        parts.add(inner.substring(start));
        return parts;
    }

    private static void parseParam(StageKind kind, String assignment, Map<String, Double> given, Map<String, String> givenTexts) {
        int eq = assignment.indexOf('=');
        if (eq < 0) {
            throw new ChainSpecException(kind.label() + ": expected key=value, got \"" + assignment + "\"");
        }
        String key = assignment.substring(0, eq).trim();
        String valueText = assignment.substring(eq + 1).trim();
        String setting = kind.label() + "." + key;
        Param param = null;
        for (Param p : kind.params()) {
            if (p.key().equals(key)) {
                param = p;
            }
        }
        if (param == null) {
            List<String> keys = new ArrayList<>();
            kind.params().forEach(p -> keys.add(p.key()));
            throw new ChainSpecException(setting + "=" + valueText + ": unknown parameter; expected one of " + keys);
        }
        if (given.containsKey(key) || givenTexts.containsKey(key)) {
            throw new ChainSpecException(setting + "=" + valueText + ": given twice; at most once per stage");
        }
        if (param.isText()) {
            givenTexts.put(key, TextValue.parse(setting, valueText));
        } else {
            given.put(key, parseNumber(param, setting, valueText));
        }
    }

    private static double parseNumber(Param param, String setting, String valueText) {
        Matcher m = VALUE.matcher(valueText);
        if (!m.matches()) {
            throw new ChainSpecException(setting + "=" + valueText + ": not a number with unit (" + param.unit().accepted + ")");
        }
        double number = Double.parseDouble(m.group(1));
        String suffix = m.group(2);
        if (suffix.isEmpty() && (param.unit() == Unit.TIME || param.unit() == Unit.FREQUENCY || param.unit() == Unit.RATE)) {
            throw new ChainSpecException(setting + "=" + valueText + ": needs a unit (" + param.unit().accepted + ")");
        }
        return param.unit().convert(setting, valueText, number, suffix);
    }

    private static void checkOrder(List<StageSpec> stages) {
        if (stages.isEmpty()) {
            throw new ChainSpecException("chain: no stages");
        }
        for (int i = 0; i < stages.size(); i++) {
            boolean last = i == stages.size() - 1;
            StageKind k = stages.get(i).kind();
            if (k.reconstruction() && !last) {
                throw new ChainSpecException("chain: " + k.label() + " reconstructs and must be the last stage (found at position "
                        + (i + 1) + " of " + stages.size() + ")");
            }
            if (!k.reconstruction() && last) {
                throw new ChainSpecException("chain: the last stage must reconstruct (" + StageKind.reconstructionLabels() + "); found "
                        + k.label());
            }
        }
    }

    /** The stages in order; the last reconstructs. */
    public List<StageSpec> stages() {
        return stages;
    }

    /** Returns a copy with stage {@code index}'s parameter {@code key} changed (canonical units), validated. */
    public ChainSpec with(int index, String key, double value) {
        List<StageSpec> copy = new ArrayList<>(stages);
        copy.set(index, stages.get(index).with(key, value));
        return new ChainSpec(copy);
    }

    /**
     * Returns a copy with stage {@code index}'s parameter {@code key} set from text written as in a
     * description (e.g. {@code "5rad/s"}, {@code "2ms"}); the stage's other values are kept. Validated
     * like {@link #parse}, so errors name the setting, the value and the limit.
     */
    public ChainSpec withText(int index, String key, String valueText) {
        StageSpec old = stages.get(index);
        old.requireKey(key);
        Param param = old.kind().param(key);
        String setting = old.kind().label() + "." + key;
        String written = valueText.strip();
        StageSpec changed = param.isText()
                ? old.withText(key, TextValue.parse(setting, written))
                : old.with(key, parseNumber(param, setting, written));
        List<StageSpec> copy = new ArrayList<>(stages);
        copy.set(index, changed);
        return new ChainSpec(copy);
    }

    /** Canonical text of the whole chain. */
    @Override
    public String toString() {
        StringBuilder b = new StringBuilder();
        for (StageSpec s : stages) {
            if (b.length() > 0) {
                b.append(" | ");
            }
            b.append(s);
        }
        return b.toString();
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof ChainSpec other && other.stages.equals(stages);
    }

    @Override
    public int hashCode() {
        return stages.hashCode();
    }
}
