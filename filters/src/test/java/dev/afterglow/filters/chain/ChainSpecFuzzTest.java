package dev.afterglow.filters.chain;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import dev.afterglow.filters.fuzz.FuzzInputs;
import dev.afterglow.filters.fuzz.FuzzTarget;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;

/**
 * Fuzz target for the chain-description parser: any text either parses or is refused with a
 * {@link ChainSpecException} (nothing else escapes); a parsed spec has every value finite and in
 * its parameter's range, the stage order the grammar demands, and canonical text that parses back
 * to an equal spec. Well-formed descriptions, written with every unit and number form the grammar
 * allows, parse to the values an independent conversion gives (1 ms = 1000 us and 1 s = 10^6 us by
 * the SI prefixes; a = 2*pi*f for Hz).
 */
@FuzzTarget
class ChainSpecFuzzTest {
    private static final String ALPHABET = "abcdefghiklmnoprstuvwyzHz-()|,=.+-eE0123456789 \t/\"\\";

    /** One stage as written, with the values an independent conversion expects (canonical units). */
    record Written(StageKind kind, String text, Map<String, Double> values, Map<String, String> texts) {
    }

    /** A whole description as written; {@code stages} is empty unless every stage was written well. */
    record Description(String text, List<Written> stages) {
        @Override
        public String toString() {
            return text;
        }
    }

    @Property
    void anyTextParsesOrIsRefusedWithAChainSpecException(@ForAll("texts") String text) {
        ChainSpec spec;
        try {
            spec = ChainSpec.parse(text);
        } catch (ChainSpecException refused) {
            assertFalse(refused.getMessage().isBlank(), "a refusal names the problem");
            return;
        }
        checkParsed(spec);
    }

    @Property
    void wellFormedDescriptionsParseToTheValuesWritten(@ForAll("descriptions") Description d) {
        Verdict rules = verdict(d.stages());
        ChainSpec spec;
        try {
            spec = ChainSpec.parse(d.text());
        } catch (ChainSpecException refused) {
            if (rules == Verdict.PARSES) {
                fail("refused a valid description: " + refused.getMessage());
            }
            return;
        }
        if (rules == Verdict.REFUSED) {
            fail("accepted a description the documented rules refuse: " + spec);
        }
        checkParsed(spec);
        for (int i = 0; i < d.stages().size(); i++) {
            Written w = d.stages().get(i);
            StageSpec s = spec.stages().get(i);
            assertEquals(w.kind(), s.kind());
            for (Param p : w.kind().params()) {
                if (p.isText()) {
                    assertEquals(w.texts().getOrDefault(p.key(), p.defaultText()), s.text(p.key()), w.text() + " " + p.key());
                    continue;
                }
                double expected = w.values().getOrDefault(p.key(), p.defaultValue());
                assertEquals(expected, s.get(p.key()), Math.abs(expected) * 1e-12, w.text() + " " + p.key());
            }
        }
    }

    /** Invariants of every accepted spec. */
    private static void checkParsed(ChainSpec spec) {
        List<StageSpec> stages = spec.stages();
        assertFalse(stages.isEmpty());
        for (int i = 0; i < stages.size(); i++) {
            StageKind kind = stages.get(i).kind();
            assertEquals(i == stages.size() - 1, kind.reconstruction(), "only the last stage reconstructs: " + spec);
            for (Param p : kind.params()) {
                if (p.isText()) {
                    String t = stages.get(i).text(p.key());
                    assertTrue(!t.isEmpty() && t.chars().noneMatch(c -> c < 0x20 || c == 0x7f),
                            kind.label() + "." + p.key() + " is non-empty text without control characters: " + t);
                    continue;
                }
                double v = stages.get(i).get(p.key());
                assertTrue(Double.isFinite(v) && v >= p.min() && v <= p.max(),
                        kind.label() + "." + p.key() + "=" + v + " outside [" + p.min() + ", " + p.max() + "]");
                if (p.unit() == Unit.INTEGER) {
                    assertEquals(Math.rint(v), v, kind.label() + "." + p.key() + " is whole");
                }
            }
        }
        String canonical = spec.toString();
        ChainSpec again = ChainSpec.parse(canonical);
        assertEquals(spec, again, "canonical text " + canonical + " parses back to an equal spec");
        assertEquals(spec.hashCode(), again.hashCode());
        assertEquals(canonical, again.toString(), "canonical text is a fixed point");
    }

    /** What the documented rules say of a description of well-written stages. */
    enum Verdict { PARSES, TOO_CLOSE_TO_CALL, REFUSED }

    /**
     * The verdict of the documented rules (order, limits, whole numbers, complementary's pairs,
     * patch-support's support within its patch).
     * A value within a relative 1e-9 of a limit is too close to call: the oracle converts units
     * with its own arithmetic, which may round the last bit differently.
     */
    private static Verdict verdict(List<Written> stages) {
        Verdict result = Verdict.PARSES;
        for (int i = 0; i < stages.size(); i++) {
            Written w = stages.get(i);
            if (w.kind().reconstruction() != (i == stages.size() - 1)) {
                return Verdict.REFUSED;
            }
            Map<String, Double> v = new LinkedHashMap<>();
            for (Param p : w.kind().params()) {
                if (p.isText()) {
                    continue; // stage() writes only valid text
                }
                double x = w.values().getOrDefault(p.key(), p.defaultValue());
                v.put(p.key(), x);
                if (p.unit() == Unit.INTEGER && x != Math.rint(x)) {
                    return Verdict.REFUSED;
                }
                result = worst(result, atMost(p.min(), x));
                result = worst(result, atMost(x, p.max()));
            }
            if (w.kind() == StageKind.PATCH_SUPPORT) {
                // The patch's whole weight: 8d pixels on ring d, each weighing radius + 1 - d. A radius
                // outside its limits is refused by them already (and must not drive this loop).
                double r = v.get("radius");
                if (r >= 1 && r <= 3 && r == Math.rint(r)) {
                    double whole = 0;
                    for (int d = 1; d <= r; d++) {
                        whole += 8 * d * (r + 1 - d);
                    }
                    result = worst(result, atMost(v.get("support"), whole));
                }
            }
            if (w.kind() == StageKind.COMPLEMENTARY) {
                result = worst(result, atMost(v.get("low-cutoff"), v.get("cutoff")));
                Verdict darkBelow = atMost(v.get("dark"), v.get("saturated"));
                result = worst(result, darkBelow == Verdict.PARSES && v.get("dark").equals(v.get("saturated"))
                        ? Verdict.REFUSED : darkBelow);
            }
        }
        return result;
    }

    private static Verdict atMost(double a, double b) {
        if (!Double.isFinite(a) || !Double.isFinite(b)) {
            return Verdict.REFUSED;
        }
        double margin = 1e-9 * Math.max(Math.abs(a), Math.abs(b));
        if (a <= b - margin || a == b) {
            return Verdict.PARSES;
        }
        return a > b + margin ? Verdict.REFUSED : Verdict.TOO_CLOSE_TO_CALL;
    }

    private static Verdict worst(Verdict a, Verdict b) {
        return a.ordinal() >= b.ordinal() ? a : b;
    }

    @Provide
    Arbitrary<String> texts() {
        return FuzzInputs.from(r -> switch (r.nextInt(8)) {
            case 0, 1, 2 -> describe(r).text();
            case 3, 4, 5 -> FuzzInputs.edit(r, describe(r).text(), ALPHABET);
            case 6 -> FuzzInputs.textFrom(r, ALPHABET, 80);
            default -> FuzzInputs.textFrom(r, "()|,= ", 12);
        });
    }

    @Provide
    Arbitrary<Description> descriptions() {
        return FuzzInputs.from(ChainSpecFuzzTest::describe);
    }

    private static final StageKind[] DENOISE = java.util.Arrays.stream(StageKind.values())
            .filter(k -> !k.reconstruction()).toArray(StageKind[]::new);
    private static final StageKind[] RECON = java.util.Arrays.stream(StageKind.values())
            .filter(StageKind::reconstruction).toArray(StageKind[]::new);

    /** A description of up to four denoise stages and a reconstruction; one in ten in any order. */
    private static Description describe(Random r) {
        List<Written> stages = new ArrayList<>();
        if (r.nextInt(10) == 0) {
            for (int n = 1 + r.nextInt(4); n > 0; n--) {
                stages.add(stage(r, FuzzInputs.oneOf(r, StageKind.values())));
            }
        } else {
            for (int n = r.nextInt(5); n > 0; n--) {
                stages.add(stage(r, FuzzInputs.oneOf(r, DENOISE)));
            }
            stages.add(stage(r, FuzzInputs.oneOf(r, RECON)));
        }
        String sp = space(r);
        StringBuilder b = new StringBuilder(sp);
        for (int i = 0; i < stages.size(); i++) {
            b.append(i > 0 ? sp + "|" + sp : "").append(stages.get(i).text());
        }
        return new Description(b.append(sp).toString(), stages);
    }

    /** One stage of {@code kind} with some of its parameters (a third left to their defaults), each written in some allowed form. */
    private static Written stage(Random r, StageKind kind) {
        String sp = space(r);
        Map<String, Double> values = new LinkedHashMap<>();
        Map<String, String> texts = new LinkedHashMap<>();
        List<String> parts = new ArrayList<>();
        for (Param p : kind.params()) {
            if (r.nextInt(3) == 0) {
                continue; // left to its default
            }
            if (p.isText()) {
                String value = textValue(r);
                parts.add(sp + p.key() + sp + "=" + sp + written(r, value) + sp);
                texts.put(p.key(), value);
                continue;
            }
            Suffix u = FuzzInputs.oneOf(r, suffixes(p.unit()).toArray(Suffix[]::new));
            int form = r.nextInt(10);
            String number = form < 5 ? inRange(r, p, u.factor()) : form < 8 ? nearLimit(r, p, u.factor()) : numberText(r);
            String unit = u.text().isEmpty() ? "" : FuzzInputs.oneOf(r, "", " ") + u.text();
            parts.add(sp + p.key() + sp + "=" + sp + number + unit + sp);
            values.put(p.key(), Double.parseDouble(number) * u.factor());
        }
        StringBuilder b = new StringBuilder(kind.label());
        if (!parts.isEmpty() || r.nextBoolean()) {
            b.append(sp).append('(').append(String.join(",", parts)).append(')');
        }
        return new Written(kind, b.toString(), values, texts);
    }

    /** Text a user might give: non-empty, any printable character incl. separators, quotes and backslashes. */
    private static String textValue(Random r) {
        return "m" + FuzzInputs.textFrom(r, r.nextBoolean() ? "abz09._/-~+:@%" : "ab09./ ,()|=\"\\'\u00e9", 20);
    }

    /**
     * The text as a user writes it, by the documented rule and not the parser's code: bare when
     * every character is one of A-Z a-z 0-9 . _ / ~ + : @ % - (and sometimes quoted anyway),
     * otherwise in double quotes with a backslash before each quote and backslash.
     */
    private static String written(Random r, String value) {
        boolean bare = value.chars().allMatch(c -> c < 128 && (Character.isLetterOrDigit(c) || "._/~+:@%-".indexOf(c) >= 0));
        if (bare && r.nextBoolean()) {
            return value;
        }
        return "\"" + value.replace("\\", "\\\\").replace("\"", "\\\"") + "\"";
    }

    /** A unit written after a number and what it multiplies by to reach the canonical unit. */
    record Suffix(String text, double factor) {
    }

    /** The units the grammar accepts for each kind of quantity (SI prefixes; a = 2*pi*f for Hz, and f = a/(2*pi) for a rate written in rad/s). */
    private static List<Suffix> suffixes(Unit unit) {
        return switch (unit) {
            case TIME -> List.of(new Suffix("us", 1), new Suffix("ms", 1e3), new Suffix("s", 1e6));
            case FREQUENCY -> List.of(new Suffix("rad/s", 1), new Suffix("Hz", 2 * Math.PI));
            case RATE -> List.of(new Suffix("Hz", 1), new Suffix("rad/s", 1 / (2 * Math.PI)));
            case NUMBER, INTEGER -> List.of(new Suffix("", 1));
            case TEXT -> throw new IllegalArgumentException("text has no units");
        };
    }

    /** A number inside the parameter's range, in a unit worth {@code factor}. */
    private static String inRange(Random r, Param p, double factor) {
        double v = p.min() + r.nextDouble() * (p.max() - p.min());
        return p.unit() == Unit.INTEGER ? Long.toString(Math.round(v)) : Double.toString(v / factor);
    }

    /** A number at, just inside or just outside one of the parameter's limits (or 0, -0), in a unit worth {@code factor}. */
    private static String nearLimit(Random r, Param p, double factor) {
        double v = FuzzInputs.oneOf(r, p.min(), p.max(), p.defaultValue(), 0.0, -0.0);
        double w = switch (r.nextInt(5)) {
            case 0 -> v;
            case 1 -> Math.nextUp(v);
            case 2 -> Math.nextDown(v);
            case 3 -> v * 1.5;
            default -> v / 2;
        };
        return Double.toString(w / factor);
    }

    /** A decimal number in a form the grammar allows: 12, +1., .5, 1.25e-3, -7E2 ... */
    private static String numberText(Random r) {
        StringBuilder b = new StringBuilder(FuzzInputs.oneOf(r, "", "", "+", "-"));
        if (r.nextInt(5) == 0) {
            b.append('.').append(digits(r, 1, 5));
        } else {
            b.append(digits(r, 1, 7));
            if (r.nextBoolean()) {
                b.append('.').append(digits(r, 0, 5));
            }
        }
        if (r.nextInt(4) == 0) {
            b.append(FuzzInputs.oneOf(r, "e", "E")).append(FuzzInputs.oneOf(r, "", "+", "-")).append(r.nextInt(21));
        }
        return b.toString();
    }

    private static String digits(Random r, int min, int max) {
        StringBuilder b = new StringBuilder();
        for (int n = min + r.nextInt(max - min + 1); n > 0; n--) {
            b.append((char) ('0' + r.nextInt(10)));
        }
        return b.toString();
    }

    private static String space(Random r) {
        return FuzzInputs.oneOf(r, "", "", " ", "  ", "\t");
    }
}
