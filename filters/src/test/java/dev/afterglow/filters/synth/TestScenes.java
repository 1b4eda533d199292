package dev.afterglow.filters.synth;

/** Analytic stimuli for the sensor tests. */
final class TestScenes {
    private TestScenes() {
    }

    /** A scene defined per pixel by a function of time, changing only inside [fromUs, toUs). */
    abstract static class Analytic implements Scene {
        final int width;
        final int height;
        final long changeFromUs;
        final long changeToUs;
        final double speed;

        Analytic(int width, int height, long changeFromUs, long changeToUs, double speed) {
            this.width = width;
            this.height = height;
            this.changeFromUs = changeFromUs;
            this.changeToUs = changeToUs;
            this.speed = speed;
        }

        abstract float value(int x, int y, long timeUs);

        @Override
        public String name() {
            return "test";
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
            return speed;
        }

        @Override
        public void renderRow(long timeUs, int y, int x0, int x1, float[] out, int offset) {
            for (int x = x0; x < x1; x++) {
                out[offset + x - x0] = value(x, y, timeUs);
            }
        }

        @Override
        public int changedRegions(long fromUs, long toUs, int[] rects) {
            if (toUs <= changeFromUs || fromUs >= changeToUs) {
                return 0;
            }
            rects[0] = 0;
            rects[1] = 0;
            rects[2] = width;
            rects[3] = height;
            return 1;
        }

        @Override
        public int maxRegions() {
            return 1;
        }
    }

    /**
     * Each pixel's log irradiance ramps linearly by {@code size(x, y)} over [0, durationUs] from
     * {@code base(x, y)}, then stays.
     */
    static final class Ramp extends Analytic {
        private final long durationUs;
        private final double[] base;
        private final double[] size;

        Ramp(int width, int height, long durationUs, double[] base, double[] size) {
            super(width, height, 0, durationUs, 0);
            this.durationUs = durationUs;
            this.base = base;
            this.size = size;
        }

        @Override
        float value(int x, int y, long timeUs) {
            double f = Math.min(1.0, Math.max(0.0, (double) timeUs / durationUs));
            int i = y * width + x;
            return (float) (base[i] + size[i] * f);
        }

        double size(int x, int y) {
            return size[y * width + x];
        }

        double base(int x, int y) {
            return base[y * width + x];
        }
    }

    /** A constant image. */
    static final class Still extends Analytic {
        private final float[] log;

        Still(int width, int height, float[] log) {
            super(width, height, 0, 0, 0);
            this.log = log;
        }

        @Override
        float value(int x, int y, long timeUs) {
            return log[y * width + x];
        }
    }

    /**
     * A vertical edge moving right at {@code speedPxPerS}: irradiance {@code bright} left of it and
     * {@code dark} right of it, each pixel weighted by the share of it the bright side covers.
     */
    static final class MovingEdge extends Analytic {
        private final double startPx;
        private final double bright;
        private final double dark;

        MovingEdge(int width, int height, double startPx, double speedPxPerS, double bright, double dark) {
            super(width, height, Long.MIN_VALUE, Long.MAX_VALUE, speedPxPerS);
            this.startPx = startPx;
            this.bright = bright;
            this.dark = dark;
        }

        double edge(double timeUs) {
            return startPx + speed * timeUs * 1e-6;
        }

        /** Share of pixel x (spanning [x, x+1)) left of the edge at time t. */
        double cover(int x, double timeUs) {
            return Math.min(1, Math.max(0, edge(timeUs) - x));
        }

        @Override
        float value(int x, int y, long timeUs) {
            double c = cover(x, timeUs);
            return (float) Math.log(c * bright + (1 - c) * dark);
        }
    }
}
