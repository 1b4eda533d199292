package dev.afterglow.node.surge;

import dev.afterglow.node.assess.TinyFont;
import java.awt.BasicStroke;
import java.awt.Color;
import java.awt.Graphics2D;
import java.awt.image.BufferedImage;
import java.awt.image.DataBufferByte;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import javax.imageio.ImageIO;

/**
 * A grey PNG plot of frame latency on the generator's clock (p50, p99 and maximum) against the
 * offered rate of all sensors: linear x axis in millions of events per second, logarithmic y axis in
 * milliseconds with decade labels and minor ticks. Lines and markers are drawn with Java2D, text with
 * {@link TinyFont} (no system font needed). {@value #WIDTH}x{@value #HEIGHT} pixels.
 */
public final class LatencyPlot {
    /** Image width in pixels. */
    public static final int WIDTH = 880;
    /** Image height in pixels. */
    public static final int HEIGHT = 540;
    private static final int LEFT = 90;
    private static final int RIGHT = 30;
    private static final int TOP = 80;
    private static final int BOTTOM = 90;

    private LatencyPlot() {
    }

    /** One series: a name and y values in ms (NaN: no point) per step. */
    private record Series(String name, double percentile, int grey, float[] dash, int marker) {
    }

    private static final List<Series> SERIES = List.of(
            new Series("p50", 50, 0, null, 0),
            new Series("p99", 99, 70, new float[] {8, 5}, 1),
            new Series("max", 100, 140, new float[] {2, 4}, 2));

    /** Writes the plot of {@code steps} to {@code file}; {@code subtitle} goes under the title. */
    public static void write(Path file, List<StepResult> steps, String subtitle) throws IOException {
        BufferedImage image = new BufferedImage(WIDTH, HEIGHT, BufferedImage.TYPE_BYTE_GRAY);
        Graphics2D g = image.createGraphics();
        g.setColor(Color.WHITE);
        g.fillRect(0, 0, WIDTH, HEIGHT);
        int plotW = WIDTH - LEFT - RIGHT;
        int plotH = HEIGHT - TOP - BOTTOM;
        List<String[]> texts = new ArrayList<>(); // x, y, text, scale
        texts.add(new String[] {"10", "10", "FRAME LATENCY ON THE GENERATOR'S CLOCK VS OFFERED RATE", "2"});
        int lineY = 30;
        for (String line : TinyFont.wrap(subtitle.toUpperCase(Locale.ROOT), (WIDTH - 20) / TinyFont.ADVANCE)) {
            if (lineY > TOP - 26) {
                break; // no room for more; the CSV and the report carry the full description
            }
            texts.add(new String[] {"10", Integer.toString(lineY), line, "1"});
            lineY += TinyFont.LINE + 1;
        }

        double xMax = 0;
        double yMin = Double.POSITIVE_INFINITY;
        double yMax = 0;
        for (StepResult s : steps) {
            double x = s.offeredPerSecond() / 1e6;
            if (Double.isFinite(x)) {
                xMax = Math.max(xMax, x);
            }
            for (Series series : SERIES) {
                double y = StepResult.percentileMs(s.ownClock(), series.percentile);
                if (y > 0) {
                    yMin = Math.min(yMin, y);
                    yMax = Math.max(yMax, y);
                }
            }
        }
        double xStep = niceStep(xMax > 0 ? xMax / 5 : 0.2);
        double xTop = Math.max(xStep, Math.ceil(xMax * 1.05 / xStep) * xStep);
        int decadeLo = yMax > 0 ? (int) Math.floor(Math.log10(yMin)) : -1;
        int decadeHi = yMax > 0 ? (int) Math.ceil(Math.log10(yMax)) : 2;
        if (decadeHi <= decadeLo) {
            decadeHi = decadeLo + 1;
        }

        g.setColor(Color.BLACK);
        g.drawRect(LEFT, TOP, plotW, plotH);
        // x ticks
        for (double v = 0; v <= xTop + xStep / 2; v += xStep) {
            int px = LEFT + (int) Math.round(v / xTop * plotW);
            g.setColor(new Color(225, 225, 225));
            g.drawLine(px, TOP + 1, px, TOP + plotH - 1);
            g.setColor(Color.BLACK);
            g.drawLine(px, TOP + plotH, px, TOP + plotH + 6);
            String label = number(v);
            texts.add(new String[] {Integer.toString(px - TinyFont.width(label, 2) / 2), Integer.toString(TOP + plotH + 10), label, "2"});
        }
        // y ticks: decades labelled, 2..9 minor
        for (int d = decadeLo; d <= decadeHi; d++) {
            for (int m = 1; m <= 9; m++) {
                double v = m * Math.pow(10, d);
                if (d == decadeHi && m > 1) {
                    break;
                }
                int py = yPixel(v, decadeLo, decadeHi, plotH);
                if (m == 1) {
                    g.setColor(new Color(225, 225, 225));
                    g.drawLine(LEFT + 1, py, LEFT + plotW - 1, py);
                    g.setColor(Color.BLACK);
                    g.drawLine(LEFT - 7, py, LEFT, py);
                    String label = number(v);
                    texts.add(new String[] {Integer.toString(LEFT - 10 - TinyFont.width(label, 2)), Integer.toString(py - 7), label, "2"});
                } else {
                    g.setColor(Color.BLACK);
                    g.drawLine(LEFT - 3, py, LEFT, py);
                }
            }
        }
        texts.add(new String[] {Integer.toString(LEFT + plotW / 2 - TinyFont.width("OFFERED RATE, ALL SENSORS (M EVENTS/S)", 2) / 2),
                Integer.toString(TOP + plotH + 34), "OFFERED RATE, ALL SENSORS (M EVENTS/S)", "2"});
        texts.add(new String[] {Integer.toString(LEFT - 40), Integer.toString(TOP - 22), "LATENCY (MS, LOG SCALE)", "1"});

        // series
        int legendX = LEFT + plotW / 2 - 3 * 110 / 2;
        int legendY = TOP + plotH + 58;
        for (Series series : SERIES) {
            Color c = new Color(series.grey, series.grey, series.grey);
            g.setColor(c);
            g.setStroke(series.dash == null ? new BasicStroke(2f)
                    : new BasicStroke(2f, BasicStroke.CAP_BUTT, BasicStroke.JOIN_MITER, 10f, series.dash, 0f));
            int prevX = Integer.MIN_VALUE;
            int prevY = 0;
            List<int[]> points = new ArrayList<>();
            for (StepResult s : steps) {
                double x = s.offeredPerSecond() / 1e6;
                double y = StepResult.percentileMs(s.ownClock(), series.percentile);
                if (!Double.isFinite(x) || !(y > 0)) {
                    prevX = Integer.MIN_VALUE;
                    continue;
                }
                int px = LEFT + (int) Math.round(x / xTop * plotW);
                int py = yPixel(y, decadeLo, decadeHi, plotH);
                if (prevX != Integer.MIN_VALUE) {
                    g.drawLine(prevX, prevY, px, py);
                }
                points.add(new int[] {px, py});
                prevX = px;
                prevY = py;
            }
            g.setStroke(new BasicStroke(1.5f));
            for (int[] p : points) {
                marker(g, series.marker, p[0], p[1]);
            }
            // legend entry
            g.setStroke(series.dash == null ? new BasicStroke(2f)
                    : new BasicStroke(2f, BasicStroke.CAP_BUTT, BasicStroke.JOIN_MITER, 10f, series.dash, 0f));
            g.drawLine(legendX, legendY + 7, legendX + 36, legendY + 7);
            g.setStroke(new BasicStroke(1.5f));
            marker(g, series.marker, legendX + 18, legendY + 7);
            texts.add(new String[] {Integer.toString(legendX + 44), Integer.toString(legendY), series.name.toUpperCase(Locale.ROOT), "2"});
            legendX += 110;
        }
        if (yMax == 0) {
            texts.add(new String[] {Integer.toString(LEFT + plotW / 2 - TinyFont.width("NO FRAMES TIMED", 3) / 2),
                    Integer.toString(TOP + plotH / 2), "NO FRAMES TIMED", "3"});
        }
        g.dispose();
        byte[] raster = ((DataBufferByte) image.getRaster().getDataBuffer()).getData();
        for (String[] t : texts) {
            TinyFont.draw(raster, WIDTH, HEIGHT, Integer.parseInt(t[0]), Integer.parseInt(t[1]), t[2], Integer.parseInt(t[3]), 0);
        }
        if (!ImageIO.write(image, "png", file.toFile())) {
            throw new IOException("no PNG writer available");
        }
    }

    private static int yPixel(double v, int decadeLo, int decadeHi, int plotH) {
        double f = (Math.log10(v) - decadeLo) / (decadeHi - decadeLo);
        return TOP + plotH - (int) Math.round(f * plotH);
    }

    private static void marker(Graphics2D g, int kind, int x, int y) {
        switch (kind) {
            case 0 -> g.fillOval(x - 4, y - 4, 9, 9);
            case 1 -> g.drawRect(x - 4, y - 4, 8, 8);
            default -> g.drawPolygon(new int[] {x - 5, x + 5, x}, new int[] {y + 4, y + 4, y - 5}, 3);
        }
    }

    /** 1, 2 or 5 times a power of ten, at least {@code raw}. */
    static double niceStep(double raw) {
        double p = Math.pow(10, Math.floor(Math.log10(raw)));
        double f = raw / p;
        return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * p;
    }

    private static String number(double v) {
        if (v == 0) {
            return "0";
        }
        if (Math.abs(v - Math.rint(v)) < 1e-9 * Math.max(1, Math.abs(v))) {
            return Long.toString(Math.round(v));
        }
        String s = String.format(Locale.ROOT, "%.6f", v);
        return s.replaceAll("0+$", "").replaceAll("\\.$", "");
    }
}
