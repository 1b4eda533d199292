package dev.afterglow.node.assess;

import java.awt.image.BufferedImage;
import java.awt.image.DataBufferByte;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import javax.imageio.ImageIO;

/**
 * A labelled grey contact sheet: one row per snapshot time, columns for the ground truth, the
 * sensor's own frame and each method's reconstruction, each panel box-filtered down to at most 200
 * pixels wide, with column titles, the time of each row, each method's SSIM under its panel and
 * free text at the bottom. Text is drawn with {@link TinyFont}, so no system font is needed.
 */
final class ContactSheet {
    private static final int MARGIN = 10;
    private static final int GAP = 6;
    private static final int MAX_PANEL = 200;

    private final int width;
    private final int height;
    private final int factor;
    private final int panelWidth;
    private final int panelHeight;
    private final List<String> columns = new ArrayList<>();
    private final List<Row> rows = new ArrayList<>();

    private record Row(long timeUs, List<byte[]> panels, List<String> captions) {
    }

    /**
     * @param width image width
     * @param height image height
     * @param methodLabels titles of the method columns, after "truth" and "sensor frame"
     */
    ContactSheet(int width, int height, List<String> methodLabels) {
        this.width = width;
        this.height = height;
        this.factor = Math.max(1, (width + MAX_PANEL - 1) / MAX_PANEL);
        this.panelWidth = width / factor;
        this.panelHeight = height / factor;
        columns.add("truth");
        columns.add("sensor frame");
        columns.addAll(methodLabels);
    }

    /** Adds a row; display images are in [0, 1] (clipped), the sensor frame raw 8-bit (or null). */
    void add(long timeUs, float[] truthDisplay, byte[] sensorFrame, float[][] methodDisplay, double[] ssim) {
        List<byte[]> panels = new ArrayList<>();
        List<String> captions = new ArrayList<>();
        panels.add(shrink(truthDisplay, null));
        captions.add("");
        panels.add(sensorFrame == null ? null : shrink(null, sensorFrame));
        captions.add(sensorFrame == null ? "no frame yet" : "");
        for (int k = 0; k < methodDisplay.length; k++) {
            panels.add(shrink(methodDisplay[k], null));
            captions.add(String.format(Locale.ROOT, "ssim %.3f", ssim[k]));
        }
        rows.add(new Row(timeUs, panels, captions));
    }

    /** Snapshot rows added so far. */
    int rows() {
        return rows.size();
    }

    private byte[] shrink(float[] display, byte[] raw) {
        byte[] out = new byte[panelWidth * panelHeight];
        int f = factor;
        for (int py = 0; py < panelHeight; py++) {
            for (int px = 0; px < panelWidth; px++) {
                double sum = 0;
                for (int dy = 0; dy < f; dy++) {
                    int row = (py * f + dy) * width;
                    for (int dx = 0; dx < f; dx++) {
                        int i = row + px * f + dx;
                        sum += display != null ? Math.min(1.0, Math.max(0.0, display[i])) * 255 : raw[i] & 0xFF;
                    }
                }
                out[py * panelWidth + px] = (byte) Math.round(sum / (f * f));
            }
        }
        return out;
    }

    /** Lines of a title that fit the panel width: one line at scale 2, else split at '+' or ' ', else scale 1. */
    private List<String> titleLines(String title, int[] scaleOut) {
        String t = title.toUpperCase(Locale.ROOT);
        scaleOut[0] = 2;
        if (TinyFont.width(t, 2) <= panelWidth) {
            return List.of(t);
        }
        int cut = Math.max(t.lastIndexOf('+'), t.lastIndexOf(' '));
        if (cut > 0) {
            String a = t.substring(0, cut).trim();
            String b = t.substring(cut).trim();
            if (TinyFont.width(a, 2) <= panelWidth && TinyFont.width(b, 2) <= panelWidth) {
                return List.of(a, b);
            }
        }
        scaleOut[0] = 1;
        return List.of(t);
    }

    /** Renders the sheet with {@code notes} (word-wrapped) at the bottom and writes it as PNG. */
    void write(Path file, List<String> notes) throws IOException {
        int labelWidth = TinyFont.width("T=000.00S", 2) + GAP;
        int cols = columns.size();
        int sheetWidth = 2 * MARGIN + labelWidth + cols * (panelWidth + GAP) - GAP;
        int headerHeight = 2 * 2 * TinyFont.LINE + GAP;
        int captionHeight = 2 * TinyFont.LINE + 2;
        int rowHeight = panelHeight + captionHeight + GAP;
        List<String> noteLines = new ArrayList<>();
        int noteScale = 2;
        for (String note : notes) {
            noteLines.addAll(TinyFont.wrap(note.toUpperCase(Locale.ROOT), (sheetWidth - 2 * MARGIN) / (TinyFont.ADVANCE * noteScale)));
        }
        int sheetHeight = 2 * MARGIN + headerHeight + rows.size() * rowHeight + noteLines.size() * TinyFont.LINE * noteScale;
        byte[] px = new byte[sheetWidth * sheetHeight];
        java.util.Arrays.fill(px, (byte) 0xFF);

        int x0 = MARGIN + labelWidth;
        for (int c = 0; c < cols; c++) {
            int[] scale = new int[1];
            List<String> lines = titleLines(columns.get(c), scale);
            int y = MARGIN + headerHeight - GAP - lines.size() * TinyFont.LINE * scale[0];
            for (String line : lines) {
                int x = x0 + c * (panelWidth + GAP) + (panelWidth - TinyFont.width(line, scale[0])) / 2;
                TinyFont.draw(px, sheetWidth, sheetHeight, x, y, line, scale[0], 0);
                y += TinyFont.LINE * scale[0];
            }
        }
        for (int r = 0; r < rows.size(); r++) {
            Row row = rows.get(r);
            int top = MARGIN + headerHeight + r * rowHeight;
            String time = String.format(Locale.ROOT, "t=%.2fs", row.timeUs() * 1e-6);
            TinyFont.draw(px, sheetWidth, sheetHeight, MARGIN, top + panelHeight / 2 - TinyFont.GLYPH_HEIGHT, time, 2, 0);
            for (int c = 0; c < cols; c++) {
                int left = x0 + c * (panelWidth + GAP);
                byte[] panel = row.panels().get(c);
                for (int y = 0; y < panelHeight; y++) {
                    if (panel != null) {
                        System.arraycopy(panel, y * panelWidth, px, (top + y) * sheetWidth + left, panelWidth);
                    } else {
                        java.util.Arrays.fill(px, (top + y) * sheetWidth + left, (top + y) * sheetWidth + left + panelWidth, (byte) 0xC0);
                    }
                }
                String caption = row.captions().get(c).toUpperCase(Locale.ROOT);
                int scale = TinyFont.width(caption, 2) <= panelWidth ? 2 : 1;
                int x = left + (panelWidth - TinyFont.width(caption, scale)) / 2;
                TinyFont.draw(px, sheetWidth, sheetHeight, x, top + panelHeight + 3, caption, scale, 0);
            }
        }
        int y = MARGIN + headerHeight + rows.size() * rowHeight;
        for (String line : noteLines) {
            TinyFont.draw(px, sheetWidth, sheetHeight, MARGIN, y, line, noteScale, 0);
            y += TinyFont.LINE * noteScale;
        }
        BufferedImage image = new BufferedImage(sheetWidth, sheetHeight, BufferedImage.TYPE_BYTE_GRAY);
        byte[] dst = ((DataBufferByte) image.getRaster().getDataBuffer()).getData();
        System.arraycopy(px, 0, dst, 0, px.length);
        if (!ImageIO.write(image, "png", file.toFile())) {
            throw new IOException("no PNG writer available");
        }
    }
}
