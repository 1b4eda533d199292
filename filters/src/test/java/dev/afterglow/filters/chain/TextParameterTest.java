package dev.afterglow.filters.chain;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/** Text parameters in chain descriptions (the learned reconstruction's model file): bare or quoted, canonical text, errors. */
class TextParameterTest {

    private static StageSpec learned(String params) {
        return ChainSpec.parse("refractory | learned-recon(" + params + ")").stages().get(1);
    }

    @Test
    void shouldReadBareAndQuotedTextAndFillTheDefault() {
        assertEquals("builtin", learned("").text("model"));
        assertEquals("/opt/models/ember-2.onnx", learned("model=/opt/models/ember-2.onnx").text("model"));
        assertEquals("./m_2+x@host:5%~.onnx", learned("model = ./m_2+x@host:5%~.onnx , threads=1").text("model"));
        assertEquals("/data/my models/a,b (v2) | c=d.onnx", learned("model=\"/data/my models/a,b (v2) | c=d.onnx\", rate=5Hz").text("model"));
        assertEquals("say \"hi\" \\ there", learned("model=\"say \\\"hi\\\" \\\\ there\"").text("model"));
        assertEquals("Bildmodell-grün.onnx", learned("model=\"Bildmodell-grün.onnx\"").text("model"));
    }

    @Test
    void shouldKeepOtherParametersNextToQuotedSeparators() {
        StageSpec s = learned("rate=10Hz, model=\"a,b)|c\", threads=3");
        assertEquals("a,b)|c", s.text("model"));
        assertEquals(3, s.get("threads"));
        // 10 Hz is 2*pi*10 rad/s (angular frequency, common practice)
        assertEquals(10, s.get("rate"));
    }

    @ParameterizedTest
    @CsvSource(delimiter = ';', value = {
        "learned-recon(model=/a b.onnx); learned-recon.model=/a b.onnx: put text with characters other than",
        "learned-recon(model=\"/a.onnx); chain: missing closing '\"' for the quote at position 20",
        "learned-recon(model=\"/a\\n.onnx\"); learned-recon.model=\"/a\\n.onnx\": unknown escape",
        "learned-recon(model=\"/a.onnx\"x); learned-recon.model=\"/a.onnx\"x: text after the closing",
        "learned-recon(model=); learned-recon.model=: empty",
        "learned-recon(model=\"\"); learned-recon.model: empty",
        "learned-recon(model=a, model=b); learned-recon.model=b: given twice",
        "learned-recon(threads=0); learned-recon.threads=0 < 1",
        "learned-recon(rate=0.01Hz); learned-recon.rate=0.01Hz < 0.1Hz",
        "learned-recon(rate=20); learned-recon.rate=20: needs a unit"})
    void shouldNameTheSettingWhenTextIsMalformed(String text, String expected) {
        ChainSpecException e = assertThrows(ChainSpecException.class, () -> ChainSpec.parse(text));
        assertTrue(e.getMessage().contains(expected), e.getMessage());
    }

    @Test
    void shouldRefuseControlCharacters() {
        ChainSpecException e = assertThrows(ChainSpecException.class, () -> ChainSpec.parse("learned-recon(model=\"a\tb\")"));
        assertTrue(e.getMessage().contains("learned-recon.model: control character U+0009"), e.getMessage());
    }

    @Test
    void shouldWriteCanonicalTextThatParsesBackEqual() {
        SplittableRandom r = new SplittableRandom(17);
        for (int k = 0; k < 2000; k++) {
            String value = randomText(r);
            StageSpec s = new StageSpec(StageKind.LEARNED_RECON, java.util.Map.of(), java.util.Map.of("model", value));
            ChainSpec spec = ChainSpec.of(java.util.List.of(s));
            ChainSpec again = ChainSpec.parse(spec.toString());
            assertEquals(spec, again, spec.toString());
            assertEquals(value, again.stages().get(0).text("model"));
            assertEquals(spec.toString(), again.toString(), "canonical text is a fixed point");
        }
        assertEquals("learned-recon(model=builtin, rate=20Hz, threads=2)", ChainSpec.parse("learned-recon").toString());
        assertEquals("learned-recon(model=\"a b\", rate=20Hz, threads=2)",
                ChainSpec.parse("learned-recon(model=\"a b\")").toString());
    }

    @Test
    void shouldChangeTextThroughWithTextLikeANumber() {
        ChainSpec spec = ChainSpec.parse("refractory | learned-recon(model=/a.onnx, rate=10Hz)");
        ChainSpec changed = spec.withText(1, "model", " \"/b c.onnx\" ");
        assertEquals("/b c.onnx", changed.stages().get(1).text("model"));
        assertEquals(spec.stages().get(1).get("rate"), changed.stages().get(1).get("rate"));
        assertEquals("/d.onnx", spec.withText(1, "model", "/d.onnx").stages().get(1).text("model"));
        assertEquals(4, spec.withText(1, "threads", "4").stages().get(1).get("threads"));
        ChainSpecException bad = assertThrows(ChainSpecException.class, () -> spec.withText(1, "model", "a b"));
        assertTrue(bad.getMessage().contains("learned-recon.model=a b"), bad.getMessage());
        ChainSpecException unknown = assertThrows(ChainSpecException.class, () -> spec.withText(1, "file", "x"));
        assertTrue(unknown.getMessage().contains("learned-recon.file: unknown parameter; expected one of [model, rate, threads]"),
                unknown.getMessage());
        assertThrows(ChainSpecException.class, () -> spec.stages().get(1).with("model", 1.0));
        assertThrows(ChainSpecException.class, () -> spec.stages().get(1).withText("rate", "x"));
    }

    /** Random text a user might give: paths with spaces, separators, quotes, backslashes, non-ASCII letters; never empty or with control characters. */
    static String randomText(SplittableRandom r) {
        String alphabet = "abcXYZ019._/-~+:@% ,()|=\"\\'éü";
        int n = 1 + r.nextInt(30);
        StringBuilder b = new StringBuilder();
        for (int i = 0; i < n; i++) {
            b.append(alphabet.charAt(r.nextInt(alphabet.length())));
        }
        return b.toString();
    }
}
