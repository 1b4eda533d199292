package dev.afterglow.filters.synth;

/**
 * The timing of a camera that moves and holds: over a cycle of {@code 2 (moveUs + holdUs)} it goes
 * from 0 to 1 with a smooth start and stop ({@code (1 - cos)/2}), holds {@code holdUs}, goes back
 * to 0 and holds again. Shared by the camera motions of the synthetic scenes. Immutable.
 */
final class MotionProfile {
    private final long moveUs;
    private final long holdUs;
    private final long cycleUs;

    /**
     * @param moveUs time of one move, at least 1
     * @param holdUs time of one hold, 0 or more
     */
    MotionProfile(long moveUs, long holdUs) {
        if (moveUs < 1 || holdUs < 0) {
            throw new IllegalArgumentException("move " + moveUs + " us, hold " + holdUs + " us");
        }
        this.moveUs = moveUs;
        this.holdUs = holdUs;
        this.cycleUs = 2 * (moveUs + holdUs);
    }

    /** How far the camera has moved at {@code timeUs}, 0 .. 1. */
    double fraction(long timeUs) {
        long t = Math.floorMod(timeUs, cycleUs);
        if (t < moveUs) {
            return (1 - StrictMath.cos(Math.PI * t / moveUs)) / 2;
        }
        if (t < moveUs + holdUs) {
            return 1;
        }
        if (t < 2 * moveUs + holdUs) {
            return (1 + StrictMath.cos(Math.PI * (t - moveUs - holdUs) / moveUs)) / 2;
        }
        return 0;
    }

    /** Peak of d(fraction)/dt per second: the peak of (1 - cos(πt/T))/2 is π/(2T). */
    double peakRatePerS() {
        return Math.PI / (2 * moveUs * 1e-6);
    }

    /** True when both times lie in the same hold of the same cycle, so nothing moves between them. */
    boolean stillBetween(long fromUs, long toUs) {
        int h0 = hold(fromUs);
        return Math.floorDiv(fromUs, cycleUs) == Math.floorDiv(toUs, cycleUs) && h0 >= 0 && h0 == hold(toUs);
    }

    /** Which hold {@code timeUs} falls in (0 or 1), or -1 while the camera moves. */
    private int hold(long timeUs) {
        long t = Math.floorMod(timeUs, cycleUs);
        if (t >= moveUs && t < moveUs + holdUs) {
            return 0;
        }
        return t >= 2 * moveUs + holdUs ? 1 : -1;
    }
}
