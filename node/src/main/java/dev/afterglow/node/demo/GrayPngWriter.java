package dev.afterglow.node.demo;

import java.awt.image.BufferedImage;
import java.awt.image.DataBufferByte;
import java.io.IOException;
import java.nio.file.Path;
import javax.imageio.ImageIO;

/** Writes 8-bit grey images, several side by side with a white gap, as PNG. */
public final class GrayPngWriter {
    private static final int GAP = 4;

    private GrayPngWriter() {
    }

    /** Writes one 8-bit grey image. */
    public static void write(Path file, int width, int height, byte[] pixels) throws IOException {
        writeSideBySide(file, width, height, pixels);
    }

    /** Writes several equally sized grey images side by side. */
    public static void writeSideBySide(Path file, int width, int height, byte[]... panels) throws IOException {
        int total = panels.length * width + (panels.length - 1) * GAP;
        BufferedImage image = new BufferedImage(total, height, BufferedImage.TYPE_BYTE_GRAY);
        byte[] dst = ((DataBufferByte) image.getRaster().getDataBuffer()).getData();
        java.util.Arrays.fill(dst, (byte) 0xFF);
        for (int k = 0; k < panels.length; k++) {
            int x0 = k * (width + GAP);
            for (int y = 0; y < height; y++) {
                System.arraycopy(panels[k], y * width, dst, y * total + x0, width);
            }
        }
        if (!ImageIO.write(image, "png", file.toFile())) {
            throw new IOException("no PNG writer available");
        }
    }
}
