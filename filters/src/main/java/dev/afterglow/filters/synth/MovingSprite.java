package dev.afterglow.filters.synth;

/**
 * A rectangular object of a {@link LayeredScene} that moves horizontally at constant speed and
 * wraps around out of sight: a log-irradiance texture with an opacity mask, drawn over what lies
 * below by {@code L = L + a·(L_sprite - L)} (blending in log units), visible only inside a clip
 * rectangle. Sub-pixel positions interpolate the sprite linearly along x, so its left and right
 * edges are one-pixel ramps. Immutable.
 */
final class MovingSprite {
    private final int width;
    private final int height;
    private final int stride;
    private final float[] log;
    private final float[] alpha;
    private final boolean[] opaqueRow;
    private final int top;
    private final double startPx;
    private final double speedPxPerS;
    private final double loopStartPx;
    private final double loopLengthPx;
    private final int clipX0;
    private final int clipY0;
    private final int clipX1;
    private final int clipY1;

    /**
     * @param width sprite columns
     * @param height sprite rows
     * @param log log irradiance, width x height row-major
     * @param alpha opacity in [0, 1], width x height
     * @param top image row of the sprite's first row
     * @param startPx x of the sprite's left edge at time 0
     * @param speedPxPerS horizontal speed (either sign)
     * @param loopLengthPx distance after which the sprite comes round again, at least the clip
     *     width + sprite width + 4 (so the wrap happens out of sight)
     * @param clip visible rectangle {x0, y0, x1, y1} (end exclusive)
     */
    MovingSprite(int width, int height, float[] log, float[] alpha, int top, double startPx, double speedPxPerS,
            double loopLengthPx, int[] clip) {
        this.width = width;
        this.height = height;
        this.stride = width + 2;
        this.log = new float[stride * height];
        this.alpha = new float[stride * height];
        for (int r = 0; r < height; r++) {
            for (int c = 0; c < width; c++) {
                this.log[r * stride + c + 1] = log[r * width + c];
                this.alpha[r * stride + c + 1] = alpha[r * width + c];
            }
            this.log[r * stride] = log[r * width];
            this.log[r * stride + width + 1] = log[r * width + width - 1];
        }
        this.opaqueRow = new boolean[height];
        for (int r = 0; r < height; r++) {
            boolean opaque = true;
            for (int c = 0; c < width; c++) {
                opaque &= alpha[r * width + c] == 1f;
            }
            opaqueRow[r] = opaque;
        }
        this.top = top;
        this.startPx = startPx;
        this.speedPxPerS = speedPxPerS;
        this.clipX0 = clip[0];
        this.clipY0 = clip[1];
        this.clipX1 = clip[2];
        this.clipY1 = clip[3];
        this.loopStartPx = clipX0 - width - 2;
        double minLoop = (clipX1 - clipX0) + width + 4;
        if (!(loopLengthPx >= minLoop)) {
            throw new IllegalArgumentException("sprite loop " + loopLengthPx + "px < " + minLoop + "px");
        }
        this.loopLengthPx = loopLengthPx;
    }

    /** Speed in pixels per second (absolute). */
    double speed() {
        return Math.abs(speedPxPerS);
    }

    /** x of the left edge at {@code timeUs}, wrapped into the loop. */
    double position(long timeUs) {
        double p = startPx - loopStartPx + speedPxPerS * (timeUs * 1e-6);
        p -= Math.floor(p / loopLengthPx) * loopLengthPx;
        return loopStartPx + p;
    }

    /** Draws the sprite's part of row {@code y}, columns [x0, x1), over {@code out[off ..]}. */
    void composite(long timeUs, int y, int x0, int x1, float[] out, int off) {
        if (y < top || y >= top + height || y < clipY0 || y >= clipY1) {
            return;
        }
        double pos = position(timeUs);
        // Columns whose padded coordinate x + 1 - pos lies in (0, width + 1): the sprite and its ramps.
        int from = Math.max(Math.max(x0, clipX0), (int) Math.floor(pos));
        int to = Math.min(Math.min(x1, clipX1), (int) Math.ceil(pos + width));
        if (from >= to) {
            return;
        }
        // Padded column of image column x is x + 1 - pos = (x + q) + f with q integer, 0 <= f < 1.
        double shift = 1 - pos;
        int q = (int) Math.floor(shift);
        float f = (float) (shift - q);
        float g = 1 - f;
        int rowBase = (y - top) * stride;
        // Columns whose two samples both lie inside an opaque row need no blending.
        int innerFrom = to;
        int innerTo = to;
        if (opaqueRow[y - top]) {
            innerFrom = Math.max(from, 1 - q);
            innerTo = Math.max(innerFrom, Math.min(to, width - q));
        }
        blend(from, innerFrom, x0, q, f, g, rowBase, out, off);
        for (int x = innerFrom; x < innerTo; x++) {
            int i = rowBase + x + q;
            out[off + x - x0] = g * log[i] + f * log[i + 1];
        }
        blend(innerTo, to, x0, q, f, g, rowBase, out, off);
    }

    private void blend(int from, int to, int x0, int q, float f, float g, int rowBase, float[] out, int off) {
        for (int x = from; x < to; x++) {
            int i = rowBase + x + q;
            float a = g * alpha[i] + f * alpha[i + 1];
            if (a > 0) {
                float s = g * log[i] + f * log[i + 1];
                int o = off + x - x0;
                out[o] += a * (s - out[o]);
            }
        }
    }

    /** Appends the rectangles this sprite may change over [t0, t1]; returns the new count. */
    int changed(long t0Us, long t1Us, int[] rects, int count) {
        if (speedPxPerS == 0) {
            return count;
        }
        double p0 = position(t0Us);
        double p1 = position(t1Us);
        boolean wrapped = speedPxPerS > 0 ? p1 < p0 : p1 > p0;
        if (!wrapped) {
            return add(rects, count, Math.min(p0, p1), Math.max(p0, p1));
        }
        double lo = speedPxPerS > 0 ? p0 : p1;
        double hi = speedPxPerS > 0 ? p1 : p0;
        count = add(rects, count, lo, Double.MAX_VALUE / 4);
        return add(rects, count, -Double.MAX_VALUE / 4, hi);
    }

    private int add(int[] rects, int count, double leftMin, double leftMax) {
        int x0 = (int) Math.max(clipX0, Math.floor(leftMin) - 1);
        int x1 = (int) Math.min(clipX1, Math.ceil(leftMax) + width + 2);
        int y0 = Math.max(top, clipY0);
        int y1 = Math.min(top + height, clipY1);
        if (x0 >= x1 || y0 >= y1) {
            return count;
        }
        int k = 4 * count;
        rects[k] = x0;
        rects[k + 1] = y0;
        rects[k + 2] = x1;
        rects[k + 3] = y1;
        return count + 1;
    }
}
