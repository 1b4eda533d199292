package dev.afterglow.filters.chain;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventLog;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.RandomEventStream;
import dev.afterglow.filters.denoise.BackgroundActivityFilter;
import dev.afterglow.filters.denoise.HotPixelFilter;
import dev.afterglow.filters.denoise.RefractoryFilter;
import dev.afterglow.filters.recon.ComplementaryFilter;
import dev.afterglow.filters.recon.DirectIntegration;
import dev.afterglow.filters.recon.HighPassFilter;
import dev.afterglow.filters.recon.Reconstruction;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks the chain description parser: every stage with its units (us, ms, s; rad/s and Hz, with
 * the angular frequency a = 2*pi*f of any signals and systems handbook), defaults, the canonical
 * text round trip, validation messages that name the setting, the value and the limit, and that a
 * built chain holds the right stages and runs them in order.
 */
class ChainSpecTest {
    private static final double TWO_PI = 2 * Math.PI;

    private static StageSpec only(String text) {
        return ChainSpec.parse(text + " | direct-integration").stages().get(0);
    }

    private static StageSpec last(String text) {
        List<StageSpec> stages = ChainSpec.parse(text).stages();
        return stages.get(stages.size() - 1);
    }

    @Test
    void shouldConvertTimeUnitsToMicroseconds() {
        assertEquals(1500, only("refractory(period=1500us)").get("period"));
        assertEquals(2000, only("refractory(period=2ms)").get("period"));
        assertEquals(500, only("refractory(period=0.5ms)").get("period"));
        assertEquals(1_000_000, only("refractory(period=1s)").get("period"));
        assertEquals(250_000, only("refractory(period=0.25s)").get("period"));
        assertEquals(3_000_000, only("hot-pixel(learn=3s)").get("learn"));
        assertEquals(700, only("background-activity(window=700us)").get("window"));
        assertEquals(3_000, only("correlation(window=3ms, support=3)").get("window"));
        assertEquals(3, only("correlation(window=3ms, support=3)").get("support"));
        assertEquals(1500, only("refractory(period = 1.5 ms)").get("period"), "spaces around = and unit");
    }

    @Test
    void shouldConvertHertzToRadiansPerSecond() {
        // a = 2 pi f (angular frequency; any signals and systems handbook).
        assertEquals(TWO_PI * 2, last("high-pass(cutoff=2Hz)").get("cutoff"), 1e-12);
        assertEquals(7.5, last("high-pass(cutoff=7.5rad/s)").get("cutoff"));
        assertEquals(TWO_PI * 0.8, last("complementary(cutoff=0.8Hz, low-cutoff=0.1Hz)").get("cutoff"), 1e-12);
        assertEquals(TWO_PI * 0.1, last("complementary(cutoff=0.8Hz, low-cutoff=0.1Hz)").get("low-cutoff"), 1e-12);
        assertEquals(1e-3, last("high-pass(cutoff=1e-3rad/s)").get("cutoff"));
    }

    @Test
    void shouldKeepRatesInHertzAndReadRadiansPerSecondAsAnAngularFrequency() {
        // f = a / (2 pi): a rate once printed in rad/s still parses to the same rate.
        assertEquals(5, only("hot-pixel(min-rate=5Hz)").get("min-rate"));
        assertEquals(5, only("hot-pixel(min-rate=" + TWO_PI * 5 + "rad/s)").get("min-rate"), 1e-12);
        assertEquals("hot-pixel(learn=2000000us, factor=20, min-rate=20Hz)", only("hot-pixel").toString());
        assertRejected("hot-pixel(min-rate=5)", "hot-pixel.min-rate", "needs a unit");
        assertRejected("hot-pixel(min-rate=5ms)", "hot-pixel.min-rate", "unit must be Hz (or rad/s)");
    }

    @Test
    void shouldFillDefaults() {
        // The defaults StageKind documents for each parameter.
        assertEquals(1_000, only("refractory").get("period"));
        StageSpec hot = only("hot-pixel()");
        assertEquals(2_000_000, hot.get("learn"));
        assertEquals(20, hot.get("factor"));
        assertEquals(20, hot.get("min-rate"));
        assertEquals(2_000, only("background-activity").get("window"));
        assertEquals(2_000, only("correlation").get("window"));
        assertEquals(2, only("correlation").get("support"));
        assertEquals(0.2, last("direct-integration").get("contrast"));
        StageSpec hp = last("high-pass");
        assertEquals(5, hp.get("cutoff"));
        assertEquals(0.2, hp.get("contrast"));
        StageSpec cf = last("complementary");
        assertEquals(5, cf.get("cutoff"));
        assertEquals(0.5, cf.get("low-cutoff"));
        assertEquals(0.2, cf.get("contrast"));
        assertEquals(0.95, cf.get("saturated"));
        assertEquals(0.05, cf.get("dark"));
        StageSpec partly = last("high-pass(contrast=0.3)");
        assertEquals(5, partly.get("cutoff"), "unnamed parameters keep their defaults");
        assertEquals(0.3, partly.get("contrast"));
        assertEquals(ChainSpec.parse("refractory | background-activity | high-pass"), ChainSpec.defaults());
    }

    @ParameterizedTest
    @CsvSource(delimiter = ';', value = {
        "refractory(period=2ms) | high-pass(cutoff=3Hz, contrast=0.15)",
        "hot-pixel(learn=1.5s, factor=12.5, min-rate=33Hz) | correlation(window=700us, support=4) | complementary(cutoff=1Hz, low-cutoff=0.05rad/s, contrast=0.3, saturated=0.9, dark=0.02)",
        "background-activity(window=1s) | direct-integration(contrast=2)",
        "high-pass(cutoff=1e-3rad/s, contrast=0.01)",
        "refractory | hot-pixel | background-activity | correlation | complementary",
        "complementary(cutoff=10000rad/s, low-cutoff=0rad/s, saturated=1, dark=0)",
    })
    void shouldParseItsOwnCanonicalTextBackToAnEqualSpec(String text) {
        ChainSpec spec = ChainSpec.parse(text);
        String canonical = spec.toString();
        ChainSpec again = ChainSpec.parse(canonical);
        assertEquals(spec, again, canonical);
        assertEquals(spec.hashCode(), again.hashCode());
        assertEquals(canonical, again.toString(), "canonical text is a fixed point");
    }

    @Test
    void shouldRoundTripRandomValidValuesOfEveryParameter() {
        SplittableRandom rnd = new SplittableRandom(7);
        for (int k = 0; k < 400; k++) {
            List<StageSpec> stages = new ArrayList<>();
            StageKind[] kinds = StageKind.values();
            for (StageKind kind : kinds) {
                if (!kind.reconstruction() && rnd.nextBoolean()) {
                    stages.add(randomStage(kind, rnd));
                }
            }
            List<StageKind> recon = new ArrayList<>();
            for (StageKind kind : kinds) {
                if (kind.reconstruction()) {
                    recon.add(kind);
                }
            }
            stages.add(randomStage(recon.get(rnd.nextInt(recon.size())), rnd));
            ChainSpec spec = ChainSpec.of(stages);
            ChainSpec again = ChainSpec.parse(spec.toString());
            assertEquals(spec, again, spec.toString());
        }
    }

    private static StageSpec randomStage(StageKind kind, SplittableRandom rnd) {
        java.util.Map<String, Double> values = new java.util.HashMap<>();
        java.util.Map<String, String> texts = new java.util.HashMap<>();
        for (Param p : kind.params()) {
            if (p.isText()) {
                texts.put(p.key(), TextParameterTest.randomText(rnd));
                continue;
            }
            double v;
            if (p.unit() == Unit.INTEGER) {
                v = (double) ((long) p.min() + rnd.nextLong((long) (p.max() - p.min()) + 1));
            } else if (rnd.nextInt(4) == 0) {
                v = rnd.nextBoolean() ? p.min() : p.max();
            } else {
                v = p.min() + rnd.nextDouble() * (p.max() - p.min());
            }
            values.put(p.key(), v);
        }
        if (kind == StageKind.PATCH_SUPPORT) {
            values.put("support", Math.min(values.get("support"),
                    dev.afterglow.filters.denoise.PatchSupportFilter.maxSupport((int) (double) values.get("radius"))));
        }
        if (kind == StageKind.COMPLEMENTARY) {
            values.put("low-cutoff", Math.min(values.get("low-cutoff"), values.get("cutoff")));
            values.put("dark", Math.min(values.get("dark"), values.get("saturated") * 0.99));
        }
        return new StageSpec(kind, values, texts);
    }

    private static void assertRejected(String text, String... parts) {
        ChainSpecException e = assertThrows(ChainSpecException.class, () -> ChainSpec.parse(text), text);
        for (String part : parts) {
            assertTrue(e.getMessage().contains(part), "message \"" + e.getMessage() + "\" should contain \"" + part + "\"");
        }
    }

    @Test
    void shouldNameSettingValueAndLimitForOutOfRangeValues() {
        assertRejected("refractory(period=2s) | high-pass", "refractory.period", "2000000us", "> 1000000us");
        assertRejected("refractory(period=0us) | high-pass", "refractory.period", "0us", "< 1us");
        assertRejected("high-pass(cutoff=2000Hz)", "high-pass.cutoff", "12566.37", "> 10000rad/s");
        assertRejected("high-pass(cutoff=0.0001rad/s)", "high-pass.cutoff", "1.0E-4rad/s", "< 0.001rad/s");
        assertRejected("high-pass(contrast=3)", "high-pass.contrast", "3", "> 2");
        assertRejected("direct-integration(contrast=-0.1)", "direct-integration.contrast", "-0.1", "< 0.01");
        assertRejected("correlation(support=9) | high-pass", "correlation.support", "9", "> 8");
        assertRejected("hot-pixel(learn=0.5ms) | high-pass", "hot-pixel.learn", "500us", "< 1000us");
        assertRejected("hot-pixel(factor=1) | high-pass", "hot-pixel.factor", "1", "< 2");
        assertRejected("background-activity(window=2s) | high-pass", "background-activity.window", "2000000us", "> 1000000us");
        assertRejected("complementary(saturated=1.5)", "complementary.saturated", "1.5", "> 1");
        assertRejected("patch-support(support=81) | high-pass", "patch-support.support", "81", "> 80");
        assertRejected("patch-support(radius=4) | high-pass", "patch-support.radius", "4", "> 3");
        assertRejected("patch-support(radius=1, support=9) | high-pass", "patch-support.support=9", "> 8",
                "3x3", "patch-support.radius=1");
        assertRejected("patch-support(support=33) | high-pass", "patch-support.support=33", "> 32", "5x5");
        assertRejected("patch-support(window=0us) | high-pass", "patch-support.window", "0us", "< 1us");
        assertRejected("complementary(dark=0.96)", "complementary.dark", "0.96", "complementary.saturated", "0.95");
    }

    @Test
    void shouldNameTheSettingAndAcceptedUnitsForAMissingOrWrongUnit() {
        assertRejected("refractory(period=1000) | high-pass", "refractory.period", "1000", "us, ms or s");
        assertRejected("high-pass(cutoff=5)", "high-pass.cutoff", "5", "rad/s or Hz");
        assertRejected("refractory(period=5Hz) | high-pass", "refractory.period", "5Hz", "us, ms or s");
        assertRejected("high-pass(cutoff=5ms)", "high-pass.cutoff", "5ms", "rad/s or Hz");
        assertRejected("high-pass(contrast=0.2ms)", "high-pass.contrast", "0.2ms", "no unit");
        assertRejected("correlation(support=2.5) | high-pass", "correlation.support", "2.5", "whole number");
        assertRejected("high-pass(cutoff=fast)", "high-pass.cutoff", "fast");
    }

    @Test
    void shouldRejectUnknownStagesAndParametersNamingTheAlternatives() {
        assertRejected("median | high-pass", "median", "refractory", "hot-pixel", "background-activity", "correlation",
                "direct-integration", "high-pass", "complementary");
        assertRejected("High-Pass", "High-Pass", "high-pass");
        assertRejected("high-pass(gain=2)", "high-pass.gain", "2", "cutoff", "contrast");
        assertRejected("high-pass(cutoff)", "high-pass", "cutoff", "key=value");
    }

    @Test
    void shouldRejectAParameterGivenTwice() {
        assertRejected("high-pass(cutoff=5rad/s, cutoff=10rad/s)", "high-pass.cutoff", "10rad/s", "twice");
    }

    @Test
    void shouldRequireExactlyOneReconstructionAtTheEnd() {
        assertRejected("high-pass | refractory", "high-pass", "last", "position 1 of 2");
        assertRejected("refractory | high-pass | background-activity", "high-pass", "last", "position 2 of 3");
        assertRejected("refractory | background-activity", "last stage must reconstruct", "background-activity",
                "direct-integration", "high-pass", "complementary");
        assertRejected("high-pass | complementary", "high-pass", "last");
    }

    @Test
    void shouldRejectEmptyAndMalformedText() {
        assertRejected("", "empty");
        assertRejected("   ", "empty");
        assertThrows(ChainSpecException.class, () -> ChainSpec.parse(null));
        assertRejected("refractory || high-pass", "empty stage");
        assertRejected("high-pass(cutoff=5rad/s", "missing ')'");
        assertRejected("high-pass(cutoff=5rad/s))", "unbalanced ')'");
        assertRejected("refractory) | high-pass(", "unbalanced ')'");
        assertRejected("high-pass(cutoff=5rad/s) x", "high-pass", "text after ')'");
    }

    /** Found by ChainSpecFuzzTest: "-0" was kept as -0.0, printed as 0 and so parsed back unequal. */
    @ParameterizedTest
    @CsvSource(delimiter = ';', value = {
        "complementary(dark=-0.0)",
        "hot-pixel(min-rate=-0.0rad/s)|direct-integration()",
        "background-activity() | hot-pixel(learn=9e0s, min-rate=-0.0Hz) | direct-integration",
        "complementary(low-cutoff=-0rad/s, dark=-0)"})
    void shouldReadMinusZeroAsZeroSoTheCanonicalTextRoundTrips(String text) {
        ChainSpec spec = ChainSpec.parse(text);
        assertEquals(spec, ChainSpec.parse(spec.toString()), spec.toString());
        for (StageSpec stage : spec.stages()) {
            for (Param p : stage.kind().params()) {
                if (p.isText()) {
                    continue;
                }
                assertEquals(0, Double.compare(Math.abs(stage.get(p.key())), stage.get(p.key())), p.key() + " is not -0.0");
            }
        }
    }

    @Test
    void shouldRejectALowCutoffAboveTheCutoff() {
        assertRejected("complementary(cutoff=5rad/s, low-cutoff=10rad/s)", "complementary.low-cutoff", "10",
                "complementary.cutoff", "5");
        assertRejected("complementary(cutoff=1Hz, low-cutoff=7rad/s)", "complementary.low-cutoff", "7",
                "complementary.cutoff", "6.28");
        ChainSpec ok = ChainSpec.parse("complementary(cutoff=5rad/s, low-cutoff=5rad/s)");
        assertEquals(5, ok.stages().get(0).get("low-cutoff"), "equal cut-offs are allowed");
        assertThrows(ChainSpecException.class, () -> ok.with(0, "low-cutoff", 6));
    }

    @Test
    void shouldBuildTheStagesTheDescriptionNames() {
        Chain chain = Chain.build("refractory(period=3ms) | hot-pixel | background-activity(window=4ms) "
                + "| correlation(window=5ms, support=3) | high-pass(cutoff=2Hz, contrast=0.25)", 32, 24);
        List<EventStage> stages = chain.stages();
        assertEquals(5, stages.size());
        assertInstanceOf(RefractoryFilter.class, stages.get(0));
        assertInstanceOf(HotPixelFilter.class, stages.get(1));
        assertInstanceOf(BackgroundActivityFilter.class, stages.get(2));
        assertInstanceOf(BackgroundActivityFilter.class, stages.get(3));
        HighPassFilter hp = assertInstanceOf(HighPassFilter.class, stages.get(4));
        assertEquals(hp, chain.reconstruction());
        assertEquals("refractory(period=3000us)", stages.get(0).describe());
        assertEquals("background-activity", stages.get(2).name());
        assertEquals("background-activity(window=4000us)", stages.get(2).describe());
        assertEquals("correlation(window=5000us, support=3)", stages.get(3).describe());
        assertEquals(TWO_PI * 2, hp.cutoffRadPerS(), 1e-12);
        assertEquals(0.25, hp.contrast(), 1e-7);
        assertEquals(32, hp.width());
        assertEquals(24, hp.height());
        assertEquals(2, chain.stagesOf(BackgroundActivityFilter.class).size());
        assertInstanceOf(DirectIntegration.class, Chain.build("direct-integration", 4, 3).reconstruction());
        assertInstanceOf(ComplementaryFilter.class, Chain.build("complementary", 4, 3).reconstruction());
        assertThrows(ChainSpecException.class, () -> Chain.build("high-pass", 0, 3));
    }

    @Test
    void shouldRunTheStagesInTheOrderWritten() {
        // Refractory before background-activity differs from the reverse order (the background
        // filter stamps every event it sees), so the chain must match the written order only.
        RandomEventStream s = RandomEventStream.builder(32, 24, 9).build();
        String a = "refractory(period=5ms)";
        String b = "correlation(window=3ms, support=2)";
        Chain chain = Chain.build(a + " | " + b + " | high-pass(cutoff=5rad/s)", 32, 24);
        Chain first = Chain.build(a + " | direct-integration", 32, 24);
        Chain second = Chain.build(b + " | direct-integration", 32, 24);
        Reconstruction recon = new HighPassFilter(32, 24, 0.2, 5);
        EventLog viaChain = new EventLog();
        EventLog byHand = new EventLog();
        EventLog reversed = new EventLog();
        Chain firstR = Chain.build(b + " | direct-integration", 32, 24);
        Chain secondR = Chain.build(a + " | direct-integration", 32, 24);
        EventBatch batch = s.newBatch();
        EventBatch copy = s.newBatch();
        EventBatch copyR = s.newBatch();
        for (int k = 0; k < s.batches; k++) {
            s.fill(k, batch);
            copy.copyFrom(batch);
            copyR.copyFrom(batch);
            chain.process(batch);
            viaChain.addAll(batch);
            first.stages().get(0).process(copy);
            second.stages().get(0).process(copy);
            recon.process(copy);
            byHand.addAll(copy);
            firstR.stages().get(0).process(copyR);
            secondR.stages().get(0).process(copyR);
            reversed.addAll(copyR);
        }
        EventLog.assertSameEvents(byHand, viaChain, "chain output");
        assertNotEquals(byHand.size(), reversed.size(), "the order must matter for this check to mean anything");
        float[] got = new float[32 * 24];
        float[] want = new float[32 * 24];
        long end = s.t[s.size - 1];
        chain.reconstruction().readLog(end, got);
        recon.readLog(end, want);
        for (int i = 0; i < got.length; i++) {
            assertEquals(want[i], got[i], "pixel " + i);
        }
        assertEquals(s.size, chain.stages().get(0).counters().eventsIn());
        assertEquals(byHand.size(), chain.reconstruction().counters().eventsIn());
    }

    @Test
    void shouldChangeOneParameterFromTextKeepingTheOthers() {
        ChainSpec spec = ChainSpec.parse("refractory(period=100us) | high-pass(cutoff=3rad/s, contrast=0.25)");
        ChainSpec changed = spec.withText(1, "cutoff", "2Hz");
        // 2 Hz is 2*pi*2 rad/s (angular frequency, common practice).
        assertEquals(2 * Math.PI * 2, changed.stages().get(1).get("cutoff"), 1e-9);
        assertEquals(0.25, changed.stages().get(1).get("contrast"));
        assertEquals(spec.stages().get(0), changed.stages().get(0));
        assertEquals(2_000, spec.withText(0, "period", "2ms").stages().get(0).get("period"));
    }

    @Test
    void shouldRejectABadValueOrUnknownKeyWhenChangingOneParameter() {
        ChainSpec spec = ChainSpec.parse("refractory(period=100us) | high-pass(cutoff=3rad/s)");
        ChainSpecException low = assertThrows(ChainSpecException.class, () -> spec.withText(1, "cutoff", "-1rad/s"));
        assertTrue(low.getMessage().contains("high-pass.cutoff"), low.getMessage());
        ChainSpecException unknown = assertThrows(ChainSpecException.class, () -> spec.withText(0, "window", "5ms"));
        assertTrue(unknown.getMessage().contains("refractory.window: unknown parameter"), unknown.getMessage());
        ChainSpecException unit = assertThrows(ChainSpecException.class, () -> spec.withText(0, "period", "5 parsecs"));
        assertTrue(unit.getMessage().contains("refractory.period"), unit.getMessage());
    }
}
