package dev.afterglow.node.assess;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * A 5x7 bitmap font of our own for labelling pictures without system fonts (a headless JDK may
 * have none). Covers A-Z (lower case is drawn as upper case), 0-9 and {@code . , : ; - + = / ( ) % _ < > ' * | #}
 * and space; other characters are drawn as a small box. Each glyph advances 6 pixels (one blank
 * column) at scale 1, lines advance 9 pixels. Also used for the load generator's plot.
 */
public final class TinyFont {
    public static final int GLYPH_WIDTH = 5;
    public static final int GLYPH_HEIGHT = 7;
    public static final int ADVANCE = 6;
    public static final int LINE = 9;

    private static final Map<Character, int[]> GLYPHS = new HashMap<>();

    static {
        def('A', ".###.", "#...#", "#...#", "#####", "#...#", "#...#", "#...#");
        def('B', "####.", "#...#", "#...#", "####.", "#...#", "#...#", "####.");
        def('C', ".###.", "#...#", "#....", "#....", "#....", "#...#", ".###.");
        def('D', "####.", "#...#", "#...#", "#...#", "#...#", "#...#", "####.");
        def('E', "#####", "#....", "#....", "####.", "#....", "#....", "#####");
        def('F', "#####", "#....", "#....", "####.", "#....", "#....", "#....");
        def('G', ".###.", "#...#", "#....", "#.###", "#...#", "#...#", ".####");
        def('H', "#...#", "#...#", "#...#", "#####", "#...#", "#...#", "#...#");
        def('I', ".###.", "..#..", "..#..", "..#..", "..#..", "..#..", ".###.");
        def('J', "..###", "...#.", "...#.", "...#.", "...#.", "#..#.", ".##..");
        def('K', "#...#", "#..#.", "#.#..", "##...", "#.#..", "#..#.", "#...#");
        def('L', "#....", "#....", "#....", "#....", "#....", "#....", "#####");
        def('M', "#...#", "##.##", "#.#.#", "#.#.#", "#...#", "#...#", "#...#");
        def('N', "#...#", "#...#", "##..#", "#.#.#", "#..##", "#...#", "#...#");
        def('O', ".###.", "#...#", "#...#", "#...#", "#...#", "#...#", ".###.");
        def('P', "####.", "#...#", "#...#", "####.", "#....", "#....", "#....");
        def('Q', ".###.", "#...#", "#...#", "#...#", "#.#.#", "#..#.", ".##.#");
        def('R', "####.", "#...#", "#...#", "####.", "#.#..", "#..#.", "#...#");
        def('S', ".####", "#....", "#....", ".###.", "....#", "....#", "####.");
        def('T', "#####", "..#..", "..#..", "..#..", "..#..", "..#..", "..#..");
        def('U', "#...#", "#...#", "#...#", "#...#", "#...#", "#...#", ".###.");
        def('V', "#...#", "#...#", "#...#", "#...#", "#...#", ".#.#.", "..#..");
        def('W', "#...#", "#...#", "#...#", "#.#.#", "#.#.#", "#.#.#", ".#.#.");
        def('X', "#...#", "#...#", ".#.#.", "..#..", ".#.#.", "#...#", "#...#");
        def('Y', "#...#", "#...#", ".#.#.", "..#..", "..#..", "..#..", "..#..");
        def('Z', "#####", "....#", "...#.", "..#..", ".#...", "#....", "#####");
        def('0', ".###.", "#...#", "#..##", "#.#.#", "##..#", "#...#", ".###.");
        def('1', "..#..", ".##..", "..#..", "..#..", "..#..", "..#..", ".###.");
        def('2', ".###.", "#...#", "....#", "...#.", "..#..", ".#...", "#####");
        def('3', "#####", "...#.", "..#..", "...#.", "....#", "#...#", ".###.");
        def('4', "...#.", "..##.", ".#.#.", "#..#.", "#####", "...#.", "...#.");
        def('5', "#####", "#....", "####.", "....#", "....#", "#...#", ".###.");
        def('6', "..##.", ".#...", "#....", "####.", "#...#", "#...#", ".###.");
        def('7', "#####", "....#", "...#.", "..#..", ".#...", ".#...", ".#...");
        def('8', ".###.", "#...#", "#...#", ".###.", "#...#", "#...#", ".###.");
        def('9', ".###.", "#...#", "#...#", ".####", "....#", "...#.", ".##..");
        def(' ', ".....", ".....", ".....", ".....", ".....", ".....", ".....");
        def('.', ".....", ".....", ".....", ".....", ".....", ".##..", ".##..");
        def(',', ".....", ".....", ".....", ".....", ".##..", "..#..", ".#...");
        def(':', ".....", ".##..", ".##..", ".....", ".##..", ".##..", ".....");
        def(';', ".....", ".##..", ".##..", ".....", ".##..", "..#..", ".#...");
        def('-', ".....", ".....", ".....", "#####", ".....", ".....", ".....");
        def('+', ".....", "..#..", "..#..", "#####", "..#..", "..#..", ".....");
        def('=', ".....", ".....", "#####", ".....", "#####", ".....", ".....");
        def('/', ".....", "....#", "...#.", "..#..", ".#...", "#....", ".....");
        def('(', "...#.", "..#..", ".#...", ".#...", ".#...", "..#..", "...#.");
        def(')', ".#...", "..#..", "...#.", "...#.", "...#.", "..#..", ".#...");
        def('%', "##...", "##..#", "...#.", "..#..", ".#...", "#..##", "...##");
        def('_', ".....", ".....", ".....", ".....", ".....", ".....", "#####");
        def('<', "...#.", "..#..", ".#...", "#....", ".#...", "..#..", "...#.");
        def('>', ".#...", "..#..", "...#.", "....#", "...#.", "..#..", ".#...");
        def('\'', "..#..", "..#..", ".#...", ".....", ".....", ".....", ".....");
        def('*', ".....", "..#..", "#.#.#", ".###.", "#.#.#", "..#..", ".....");
        def('|', "..#..", "..#..", "..#..", "..#..", "..#..", "..#..", "..#..");
        def('#', ".#.#.", ".#.#.", "#####", ".#.#.", "#####", ".#.#.", ".#.#.");
    }

    private static final int[] UNKNOWN = rows("#####", "#...#", "#...#", "#...#", "#...#", "#...#", "#####");

    private TinyFont() {
    }

    private static void def(char c, String... rows) {
        GLYPHS.put(c, rows(rows));
    }

    private static int[] rows(String... rows) {
        if (rows.length != GLYPH_HEIGHT) {
            throw new IllegalStateException("glyph needs 7 rows");
        }
        int[] bits = new int[GLYPH_HEIGHT];
        for (int r = 0; r < GLYPH_HEIGHT; r++) {
            if (rows[r].length() != GLYPH_WIDTH) {
                throw new IllegalStateException("glyph row needs 5 columns: " + rows[r]);
            }
            for (int c = 0; c < GLYPH_WIDTH; c++) {
                if (rows[r].charAt(c) == '#') {
                    bits[r] |= 1 << (GLYPH_WIDTH - 1 - c);
                }
            }
        }
        return bits;
    }

    /** True if {@code c} has a glyph of its own (after upper-casing). */
    public static boolean covers(char c) {
        return GLYPHS.containsKey(Character.toUpperCase(c));
    }

    /** Width in pixels of {@code text} at {@code scale} (without the trailing blank column). */
    public static int width(String text, int scale) {
        return text.isEmpty() ? 0 : (text.length() * ADVANCE - 1) * scale;
    }

    /**
     * Draws {@code text} with its top-left corner at (x, y) into an 8-bit grey raster of width
     * {@code stride}, setting covered pixels to {@code value}; clipped to the raster.
     */
    public static void draw(byte[] raster, int stride, int height, int x, int y, String text, int scale, int value) {
        int cx = x;
        for (int k = 0; k < text.length(); k++) {
            int[] g = GLYPHS.getOrDefault(Character.toUpperCase(text.charAt(k)), UNKNOWN);
            for (int r = 0; r < GLYPH_HEIGHT; r++) {
                for (int c = 0; c < GLYPH_WIDTH; c++) {
                    if ((g[r] & (1 << (GLYPH_WIDTH - 1 - c))) == 0) {
                        continue;
                    }
                    for (int dy = 0; dy < scale; dy++) {
                        for (int dx = 0; dx < scale; dx++) {
                            int px = cx + c * scale + dx;
                            int py = y + r * scale + dy;
                            if (px >= 0 && px < stride && py >= 0 && py < height) {
                                raster[py * stride + px] = (byte) value;
                            }
                        }
                    }
                }
            }
            cx += ADVANCE * scale;
        }
    }

    /** Splits {@code text} at spaces into lines of at most {@code maxChars} (longer words stay whole). */
    public static List<String> wrap(String text, int maxChars) {
        List<String> lines = new ArrayList<>();
        StringBuilder line = new StringBuilder();
        for (String word : text.split(" ")) {
            if (line.length() > 0 && line.length() + 1 + word.length() > maxChars) {
                lines.add(line.toString());
                line.setLength(0);
            }
            if (line.length() > 0) {
                line.append(' ');
            }
            line.append(word);
        }
        if (line.length() > 0) {
            lines.add(line.toString());
        }
        return lines;
    }
}
