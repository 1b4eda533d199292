package dev.afterglow.filters.synth;

/**
 * What caused each event the {@link SyntheticSensor} emits, so evaluations can count how much of
 * each kind a denoise stage keeps. Stored as one byte per event.
 */
public final class EventLabel {
    /** A level crossing of the scene's log irradiance (event generation model). */
    public static final byte SIGNAL = 0;
    /** Background-activity noise. */
    public static final byte BACKGROUND = 1;
    /** An event of a hot pixel. */
    public static final byte HOT_PIXEL = 2;

    private EventLabel() {
    }

    /** True for the labels of noise (background activity and hot pixels). */
    public static boolean isNoise(byte label) {
        return label != SIGNAL;
    }
}
