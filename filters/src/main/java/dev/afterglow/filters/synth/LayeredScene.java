package dev.afterglow.filters.synth;

import java.util.List;

/**
 * A static background with {@link MovingSprite}s drawn over it in order: the base of the scenes
 * with moving objects. Only the sprites' sweep rectangles change. Immutable.
 */
abstract class LayeredScene implements Scene {
    private final String name;
    private final int width;
    private final int height;
    private final float[] background;
    private final MovingSprite[] sprites;
    private final double maxSpeed;

    LayeredScene(String name, int width, int height, float[] background, List<MovingSprite> sprites) {
        this.name = name;
        this.width = width;
        this.height = height;
        this.background = background;
        this.sprites = sprites.toArray(new MovingSprite[0]);
        double m = 0;
        for (MovingSprite s : this.sprites) {
            m = Math.max(m, s.speed());
        }
        this.maxSpeed = m;
    }

    @Override
    public String name() {
        return name;
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
        for (MovingSprite s : sprites) {
            s.composite(timeUs, y, x0, x1, out, offset);
        }
    }

    @Override
    public int changedRegions(long fromUs, long toUs, int[] rects) {
        int count = 0;
        for (MovingSprite s : sprites) {
            count = s.changed(fromUs, toUs, rects, count);
        }
        return count;
    }

    @Override
    public int maxRegions() {
        return 2 * sprites.length;
    }
}
