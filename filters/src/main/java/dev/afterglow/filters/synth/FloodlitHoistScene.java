package dev.afterglow.filters.synth;

import java.util.SplittableRandom;

/**
 * {@code floodlit-hoist}: a saturated light beside a dark region, with a swinging object across
 * both. A yard at night: a brick wall with a floodlight mounted on it (the lamp face 150 times the
 * frames' full scale, its pool of light on the wall and the ground up to 5 times, so frames clip at
 * 255 over about a tenth of the image) next to an unlit corner on the right (0.03 of full scale at
 * the corner's edge falling to 0.005 deep inside, so with the scene's sensor, read noise 3.5 DN,
 * the frames there are mostly read noise). A crate hangs from a hoist chain whose pivot is above
 * the image and swings as a pendulum (amplitude 28 degrees, period 2.4 s) from in front of the
 * floodlight to into the dark corner and back: a silhouette against the light, a dim grey shape in
 * the corner, fastest (about 1.1 image heights per second) at the bottom of its arc.
 *
 * <p>Sizes are fractions of the image (designed at 4:3), so the scene scales down for tests. The
 * crate and chain are drawn analytically each time (rotated with the chain, anti-aliased over one
 * pixel); {@link #changedRegions} reports the crate's sweep and the chain's sweep in horizontal
 * bands. Built from the seed; immutable.
 */
public final class FloodlitHoistScene implements Scene {
    /** Scene name. */
    public static final String NAME = "floodlit-hoist";
    private static final double PERIOD_US = 2_400_000;
    private static final double AMPLITUDE_RAD = Math.toRadians(28);
    private static final int CHAIN_BANDS = 8;
    /** The corner's left edge as a fraction of the width. */
    static final double CORNER_X = 0.66;

    private final int width;
    private final int height;
    private final float[] background;
    private final double pivotX;
    private final double pivotY;
    /** Pivot to the chain's lower end (the crate's top edge). */
    private final double chainLength;
    private final double chainHalf;
    private final double crateHalfW;
    private final double crateHalfH;
    /** Radius of a circle about the crate's centre that holds the whole crate. */
    private final double crateRadius;
    private final float chainLog;
    private final float[] crateLog;
    private final int crateTexW;
    private final int crateTexH;
    private final double maxSpeed;

    /**
     * @param width image width, at least 32
     * @param height image height, at least 24
     * @param seed seed of the textures
     */
    public FloodlitHoistScene(int width, int height, long seed) {
        this.width = width;
        this.height = height;
        SplittableRandom random = new SplittableRandom(seed ^ 0x464C_4F4FL);
        double sx = width / 640.0;
        this.background = background(width, height, random.split());
        this.pivotX = 0.5 * width;
        this.pivotY = -0.25 * height;
        this.chainLength = 0.78 * height;
        this.chainHalf = Math.max(0.6, 1.6 * sx);
        this.crateHalfW = 0.06 * width;
        this.crateHalfH = 0.07 * height;
        this.crateRadius = Math.hypot(crateHalfW, crateHalfH);
        this.chainLog = Textures.ln(0.015);
        this.crateTexW = Math.max(4, (int) Math.ceil(2 * crateHalfW));
        this.crateTexH = Math.max(4, (int) Math.ceil(2 * crateHalfH));
        this.crateLog = crate(crateTexW, crateTexH, sx, random.split());
        double reach = chainLength + 2 * crateHalfH + crateRadius;
        this.maxSpeed = AMPLITUDE_RAD * 2 * Math.PI / (PERIOD_US * 1e-6) * reach;
    }

    private static float[] background(int w, int h, SplittableRandom random) {
        double sx = w / 640.0;
        double sy = h / 480.0;
        float[] grain = Textures.fractal(w, h, 16 * sx, 4, 0.6, random.split());
        float[] fine = Textures.fractal(w, h, 3 * sx, 2, 0.5, random.split());
        double lampX = 0.24 * w;
        double lampY = 0.40 * h;
        double lampRx = 0.045 * w;
        double lampRy = 0.035 * h;
        double pool = 0.10 * w;
        double groundY = 0.78 * h;
        double cornerX = CORNER_X * w;
        double brickH = 18 * sy;
        double brickW = 46 * sx;
        double mortar = Math.max(0.5, 2 * sx);
        float[] out = new float[w * h];
        for (int y = 0; y < h; y++) {
            for (int x = 0; x < w; x++) {
                int i = y * w + x;
                double px = x + 0.5;
                double py = y + 0.5;
                double v;
                if (px >= cornerX) {
                    // The unlit corner: 0.03 at its edge down to 0.005 inside, a little texture.
                    double depth = Math.min(1, (px - cornerX) / (0.2 * w));
                    v = 0.03 * StrictMath.pow(0.005 / 0.03, depth) * StrictMath.exp(0.12 * grain[i]);
                } else if (py >= groundY) {
                    double dx = (px - lampX) / (0.22 * w);
                    double dy = (py - groundY) / (0.12 * h);
                    double light = 0.05 + 2.0 * StrictMath.exp(-(dx * dx + dy * dy));
                    v = light * 0.5 * StrictMath.exp(0.3 * grain[i] + 0.3 * fine[i]);
                } else {
                    // Brick wall in running bond, lit by the floodlight's pool.
                    int course = (int) (py / brickH);
                    double offset = (course & 1) * brickW / 2;
                    double bx = (px + offset) % brickW;
                    double by = py - course * brickH;
                    boolean joint = bx < mortar || by < mortar;
                    int brick = course * 131 + (int) ((px + offset) / brickW);
                    double shade = 0.55 + 0.35 * (((brick * 2654435761L) >>> 9) % 100) / 100.0;
                    double reflect = joint ? 0.3 : shade * StrictMath.exp(0.15 * fine[i] + 0.1 * grain[i]);
                    double dx = px - lampX;
                    double dy = py - lampY;
                    double light = 0.06 + 5.0 * StrictMath.exp(-(dx * dx + dy * dy) / (2 * pool * pool));
                    v = reflect * light;
                }
                // The lamp: a bright face in a dark housing.
                double ex = (px - lampX) / lampRx;
                double ey = (py - lampY) / lampRy;
                double d = StrictMath.sqrt(ex * ex + ey * ey);
                double housing = Textures.clamp((1.3 - d) * lampRx + 0.5, 0, 1);
                double face = Textures.clamp((1 - d) * lampRx + 0.5, 0, 1);
                v = v * (1 - housing) + 0.02 * housing;
                v = v * (1 - face) + 150 * face;
                out[i] = Textures.ln(v);
            }
        }
        return out;
    }

    private static float[] crate(int cw, int ch, double sx, SplittableRandom random) {
        float[] wood = Textures.fractal(cw, ch, 8 * sx, 2, 0.5, random.split());
        float[] out = new float[cw * ch];
        double plank = ch / 4.0;
        for (int y = 0; y < ch; y++) {
            for (int x = 0; x < cw; x++) {
                int i = y * cw + x;
                double u = (x + 0.5) / cw;
                double t = (y + 0.5) / ch;
                double v = 0.22 * StrictMath.exp(0.25 * wood[i]);
                if ((y + 0.5) % plank < Math.max(0.6, plank * 0.12)) {
                    v = 0.05; // gaps between the planks
                }
                if (u < 0.1 || u > 0.9 || t < 0.08 || t > 0.92) {
                    v = 0.12; // frame boards
                }
                if (Math.abs(u - t) < 0.06) {
                    v = 0.12; // diagonal brace
                }
                out[i] = Textures.ln(v);
            }
        }
        return out;
    }

    /** Swing angle at {@code timeUs}, radians (0: hanging straight down, positive: to the left). */
    double angle(long timeUs) {
        return AMPLITUDE_RAD * StrictMath.sin(2 * Math.PI * timeUs / PERIOD_US);
    }

    @Override
    public String name() {
        return NAME;
    }

    @Override
    public int width() {
        return width;
    }

    @Override
    public int height() {
        return height;
    }

    @Override
    public double maxSpeedPxPerS() {
        return maxSpeed;
    }

    @Override
    public void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset) {
        System.arraycopy(background, y * width + x0, out, offset, x1 - x0);
        double theta = angle(timeUs);
        // Positive angles swing the crate to the left: direction of the chain (-sin, cos).
        double dirX = -StrictMath.sin(theta);
        double dirY = StrictMath.cos(theta);
        double py = y + 0.5;
        double endY = pivotY + chainLength * dirY;
        // Chain: a segment from the pivot to (pivot + length·dir).
        if (py <= endY + chainHalf + 1) {
            double along = (py - pivotY) / dirY;
            double cx = pivotX + along * dirX;
            double reach = chainHalf / dirY + chainHalf + 2; // also the round end below the line's end
            int from = Math.max(x0, (int) Math.floor(cx - reach));
            int to = Math.min(x1, (int) Math.ceil(cx + reach));
            for (int x = from; x < to; x++) {
                double rx = x + 0.5 - pivotX;
                double ry = py - pivotY;
                double t = Textures.clamp(rx * dirX + ry * dirY, 0, chainLength);
                double dist = Math.hypot(rx - t * dirX, ry - t * dirY);
                double a = Textures.clamp(chainHalf - dist + 0.5, 0, 1);
                if (a > 0) {
                    int o = offset + x - x0;
                    out[o] += (float) (a * (chainLog - out[o]));
                }
            }
        }
        // Crate: a rectangle hanging below the chain's end, rotated with it.
        double centreX = pivotX + (chainLength + crateHalfH) * dirX;
        double centreY = pivotY + (chainLength + crateHalfH) * dirY;
        if (Math.abs(py - centreY) <= crateRadius + 1) {
            int from = Math.max(x0, (int) Math.floor(centreX - crateRadius - 1));
            int to = Math.min(x1, (int) Math.ceil(centreX + crateRadius + 1));
            for (int x = from; x < to; x++) {
                double rx = x + 0.5 - centreX;
                double ry = py - centreY;
                // Local coordinates: u across the chain, v along it.
                double u = rx * dirY - ry * dirX;
                double v = rx * dirX + ry * dirY;
                double a = Textures.clamp(crateHalfW - Math.abs(u) + 0.5, 0, 1)
                        * Textures.clamp(crateHalfH - Math.abs(v) + 0.5, 0, 1);
                if (a > 0) {
                    int tx = (int) Textures.clamp((u + crateHalfW) / (2 * crateHalfW) * crateTexW, 0, crateTexW - 1);
                    int ty = (int) Textures.clamp((v + crateHalfH) / (2 * crateHalfH) * crateTexH, 0, crateTexH - 1);
                    int o = offset + x - x0;
                    out[o] += (float) (a * (crateLog[ty * crateTexW + tx] - out[o]));
                }
            }
        }
    }

    @Override
    public int changedRegions(long fromUs, long toUs, int[] rects) {
        // Range of the angle over the interval: the ends, plus a turning point if one falls inside.
        double w = 2 * Math.PI / PERIOD_US;
        double p0 = w * fromUs;
        double p1 = w * toUs;
        double s0 = StrictMath.sin(p0);
        double s1 = StrictMath.sin(p1);
        double lo = Math.min(s0, s1);
        double hi = Math.max(s0, s1);
        if (p1 - p0 >= 2 * Math.PI) {
            lo = -1;
            hi = 1;
        } else {
            // sin peaks at π/2 + 2kπ and bottoms at 3π/2 + 2kπ.
            if (Math.floor((p1 - Math.PI / 2) / (2 * Math.PI)) > Math.floor((p0 - Math.PI / 2) / (2 * Math.PI))) {
                hi = 1;
            }
            if (Math.floor((p1 - 1.5 * Math.PI) / (2 * Math.PI)) > Math.floor((p0 - 1.5 * Math.PI) / (2 * Math.PI))) {
                lo = -1;
            }
        }
        double thetaLo = AMPLITUDE_RAD * lo;
        double thetaHi = AMPLITUDE_RAD * hi;
        // x of a point at distance r along the chain is pivotX - r·sin(theta): monotone in theta.
        int count = 0;
        double bottom = pivotY + chainLength; // lowest chain end, at theta = 0
        double margin = chainHalf / StrictMath.cos(AMPLITUDE_RAD) + 2;
        double tanLo = StrictMath.tan(thetaLo);
        double tanHi = StrictMath.tan(thetaHi);
        for (int b = 0; b < CHAIN_BANDS; b++) {
            double ya = bottom * b / CHAIN_BANDS;
            double yb = bottom * (b + 1) / CHAIN_BANDS + chainHalf + 1;
            // x is linear in y for a fixed angle and monotone in the angle: the extremes lie at the corners.
            double xaLo = pivotX - (ya - pivotY) * tanLo;
            double xaHi = pivotX - (ya - pivotY) * tanHi;
            double xbLo = pivotX - (yb - pivotY) * tanLo;
            double xbHi = pivotX - (yb - pivotY) * tanHi;
            double xMin = Math.min(Math.min(xaLo, xaHi), Math.min(xbLo, xbHi));
            double xMax = Math.max(Math.max(xaLo, xaHi), Math.max(xbLo, xbHi));
            count = add(rects, count, xMin - margin, ya - 1, xMax + margin, yb + 1);
        }
        double r = chainLength + crateHalfH;
        double cxMin = pivotX - r * StrictMath.sin(thetaHi);
        double cxMax = pivotX - r * StrictMath.sin(thetaLo);
        double cosMin = Math.min(StrictMath.cos(thetaLo), StrictMath.cos(thetaHi));
        double cosMax = thetaLo <= 0 && thetaHi >= 0 ? 1 : Math.max(StrictMath.cos(thetaLo), StrictMath.cos(thetaHi));
        double pad = crateRadius + 2;
        return add(rects, count, cxMin - pad, pivotY + r * cosMin - pad, cxMax + pad, pivotY + r * cosMax + pad);
    }

    private int add(int[] rects, int count, double x0, double y0, double x1, double y1) {
        int ix0 = (int) Math.max(0, Math.floor(x0));
        int iy0 = (int) Math.max(0, Math.floor(y0));
        int ix1 = (int) Math.min(width, Math.ceil(x1));
        int iy1 = (int) Math.min(height, Math.ceil(y1));
        if (ix0 >= ix1 || iy0 >= iy1) {
            return count;
        }
        int k = 4 * count;
        rects[k] = ix0;
        rects[k + 1] = iy0;
        rects[k + 2] = ix1;
        rects[k + 3] = iy1;
        return count + 1;
    }

    @Override
    public int maxRegions() {
        return CHAIN_BANDS + 1;
    }
}
