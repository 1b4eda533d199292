package dev.afterglow.node.config;

import dev.afterglow.filters.readout.ToneMap;

/** Parses the tone map setting: {@code percentile LOW HIGH} or {@code fixed LOWLOG HIGHLOG}, optional trailing {@code gamma}. */
public final class ToneMapText {
    private ToneMapText() {
    }

    public static ToneMap parse(String setting, String text) {
        String[] parts = text == null ? new String[0] : text.trim().split("\\s+");
        if (parts.length < 3 || parts.length > 4) {
            throw new ConfigException(setting + "=\"" + text + "\": expected \"percentile LOW HIGH\" or \"fixed LOWLOG HIGHLOG\" [gamma]");
        }
        ToneMap.Mode mode;
        switch (parts[0]) {
            case "percentile" -> mode = ToneMap.Mode.PERCENTILE;
            case "fixed" -> mode = ToneMap.Mode.FIXED;
            default -> throw new ConfigException(setting + "=\"" + text + "\": mode must be percentile or fixed");
        }
        ToneMap.Curve curve = ToneMap.Curve.LOG;
        if (parts.length == 4) {
            if (!parts[3].equals("gamma")) {
                throw new ConfigException(setting + "=\"" + text + "\": the optional fourth word must be gamma");
            }
            curve = ToneMap.Curve.GAMMA;
        }
        try {
            return new ToneMap(mode, Double.parseDouble(parts[1]), Double.parseDouble(parts[2]), curve);
        } catch (NumberFormatException e) {
            throw new ConfigException(setting + "=\"" + text + "\": LOW and HIGH must be numbers", e);
        } catch (IllegalArgumentException e) {
            throw new ConfigException(setting + "=\"" + text + "\": " + e.getMessage(), e);
        }
    }
}
