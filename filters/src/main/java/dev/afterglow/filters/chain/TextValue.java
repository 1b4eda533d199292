package dev.afterglow.filters.chain;

import java.util.regex.Pattern;

/**
 * The text form of a {@link Unit#TEXT} parameter (for example a model file):
 *
 * <pre>
 * text   := bare | quoted
 * bare   := one or more of  A-Z a-z 0-9 . _ / ~ + : @ % -
 * quoted := '"' { any character but '"', '\' and control characters | '\"' | '\\' } '"'
 * </pre>
 *
 * A bare text needs no quotes: {@code model=/opt/models/ember-2.onnx}. Anything else (spaces,
 * commas, parentheses, {@code |}, {@code =}, non-ASCII letters) goes in double quotes, with
 * {@code \"} for a quote and {@code \\} for a backslash: {@code model="/data/my models/a,b.onnx"}.
 * Canonical text writes a value bare when it can and quoted otherwise, so it parses back equal.
 * Empty text, control characters and more than {@value #MAX_CHARS} characters are refused.
 */
final class TextValue {
    /** The characters a text may hold without quotes, for messages. */
    static final String BARE_CHARACTERS = "A-Z a-z 0-9 . _ / ~ + : @ % -";
    /** Longest accepted text, in characters. */
    static final int MAX_CHARS = 4096;
    private static final Pattern BARE = Pattern.compile("[A-Za-z0-9._/~+:@%-]+");

    private TextValue() {
    }

    /**
     * Reads {@code written} (already trimmed) as bare or quoted text.
     *
     * @throws ChainSpecException naming {@code setting} and what is wrong
     */
    static String parse(String setting, String written) {
        if (written.isEmpty()) {
            throw new ChainSpecException(setting + "=: empty; expected text, e.g. " + setting.substring(setting.indexOf('.') + 1)
                    + "=/path/to/file or \"/path with spaces\"");
        }
        if (written.charAt(0) != '"') {
            if (!BARE.matcher(written).matches()) {
                throw new ChainSpecException(setting + "=" + written + ": put text with characters other than "
                        + BARE_CHARACTERS + " in double quotes");
            }
            check(setting, written);
            return written;
        }
        StringBuilder value = new StringBuilder();
        int i = 1;
        while (true) {
            if (i >= written.length()) {
                throw new ChainSpecException(setting + "=" + written + ": missing closing '\"'");
            }
            char c = written.charAt(i);
            if (c == '"') {
                break;
            }
            if (c == '\\') {
                char next = i + 1 < written.length() ? written.charAt(i + 1) : 0;
                if (next != '"' && next != '\\') {
                    throw new ChainSpecException(setting + "=" + written + ": unknown escape at character " + (i + 1)
                            + "; only \\\" and \\\\ are escapes");
                }
                value.append(next);
                i += 2;
            } else {
                value.append(c);
                i++;
            }
        }
        if (i != written.length() - 1) {
            throw new ChainSpecException(setting + "=" + written + ": text after the closing '\"'");
        }
        String v = value.toString();
        check(setting, v);
        return v;
    }

    /**
     * Checks a text value given directly (not parsed): not empty, no control characters, at most
     * {@value #MAX_CHARS} characters.
     */
    static void check(String setting, String value) {
        if (value == null || value.isEmpty()) {
            throw new ChainSpecException(setting + ": empty; expected text");
        }
        if (value.length() > MAX_CHARS) {
            throw new ChainSpecException(setting + ": " + value.length() + " characters > " + MAX_CHARS);
        }
        for (int i = 0; i < value.length(); i++) {
            char c = value.charAt(i);
            if (c < 0x20 || c == 0x7f) {
                throw new ChainSpecException(setting + ": control character U+" + String.format("%04X", (int) c)
                        + " at position " + i + " in the text");
            }
        }
    }

    /** Canonical text of {@code value}: bare when possible, else quoted with escapes. */
    static String format(String value) {
        if (BARE.matcher(value).matches()) {
            return value;
        }
        StringBuilder b = new StringBuilder(value.length() + 2).append('"');
        for (int i = 0; i < value.length(); i++) {
            char c = value.charAt(i);
            if (c == '"' || c == '\\') {
                b.append('\\');
            }
            b.append(c);
        }
        return b.append('"').toString();
    }

    /**
     * Position just after the quoted text that starts at {@code open} (a '"') in {@code text}, or
     * -1 if it is not closed. Lets the splitters skip quoted text.
     */
    static int skipQuoted(String text, int open) {
        int i = open + 1;
        while (i < text.length()) {
            char c = text.charAt(i);
            if (c == '\\') {
                i += 2;
            } else if (c == '"') {
                return i + 1;
            } else {
                i++;
            }
        }
        return -1;
    }
}
