package dev.afterglow.node.publish;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;

/** Crops a region out of a full frame and box-averages it by an integer factor. */
final class RegionRenderer {
    private RegionRenderer() {
    }

    /** Output width of a region {@code width} wide at {@code downscale}. */
    static int outWidth(int width, int downscale) {
        return width / downscale;
    }

    /**
     * Gray pixels of the region; the whole frame at full scale is {@code src} itself (the caller
     * encodes it before the pipeline reuses the array), anything else a new array.
     */
    static byte[] gray(byte[] src, int srcWidth, int srcHeight, Subscription.RenderKey k) {
        int ds = k.downscale();
        int ow = k.width() / ds;
        int oh = k.height() / ds;
        if (ds == 1 && k.x() == 0 && k.y() == 0 && ow == srcWidth && oh == srcHeight) {
            return src;
        }
        byte[] out = new byte[ow * oh];
        if (ds == 1) {
            for (int y = 0; y < oh; y++) {
                System.arraycopy(src, (k.y() + y) * srcWidth + k.x(), out, y * ow, ow);
            }
            return out;
        }
        int area = ds * ds;
        for (int oy = 0; oy < oh; oy++) {
            for (int ox = 0; ox < ow; ox++) {
                int sum = 0;
                int base = (k.y() + oy * ds) * srcWidth + k.x() + ox * ds;
                for (int dy = 0; dy < ds; dy++) {
                    int row = base + dy * srcWidth;
                    for (int dx = 0; dx < ds; dx++) {
                        sum += src[row + dx] & 0xFF;
                    }
                }
                out[oy * ow + ox] = (byte) ((sum + area / 2) / area);
            }
        }
        return out;
    }

    /** Float32 little-endian bytes of the (averaged) log intensity. */
    static byte[] logF32(float[] src, int srcWidth, Subscription.RenderKey k) {
        int ds = k.downscale();
        int ow = k.width() / ds;
        int oh = k.height() / ds;
        ByteBuffer out = ByteBuffer.allocate(ow * oh * 4).order(ByteOrder.LITTLE_ENDIAN);
        float inv = 1f / (ds * ds);
        for (int oy = 0; oy < oh; oy++) {
            for (int ox = 0; ox < ow; ox++) {
                int base = (k.y() + oy * ds) * srcWidth + k.x() + ox * ds;
                float v;
                if (ds == 1) {
                    v = src[base];
                } else {
                    float sum = 0;
                    for (int dy = 0; dy < ds; dy++) {
                        int row = base + dy * srcWidth;
                        for (int dx = 0; dx < ds; dx++) {
                            sum += src[row + dx];
                        }
                    }
                    v = sum * inv;
                }
                out.putFloat(v);
            }
        }
        return out.array();
    }
}
