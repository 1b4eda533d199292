package dev.afterglow.filters.synth;

import java.util.ArrayList;
import java.util.List;

/** The built-in scenes by name, each buildable at any size from 32x24 up and from a seed. */
public enum SceneKind {
    /** {@link ParcelLineScene}: fast motion across a textured background. */
    PARCEL_LINE(ParcelLineScene.NAME, "parcels on a roller conveyor: fast motion across a textured background"),
    /** {@link DockDoorScene}: a high dynamic range. */
    DOCK_DOOR(DockDoorScene.NAME, "dim warehouse beside a sunlit loading-dock door: high dynamic range, a mover in each"),
    /** {@link OrchardPanScene}: mostly static under slow camera motion. */
    ORCHARD_PAN(OrchardPanScene.NAME, "orchard under a slow camera pan with holds: mostly static");

    /** Smallest width a scene accepts. */
    public static final int MIN_WIDTH = 32;
    /** Smallest height a scene accepts. */
    public static final int MIN_HEIGHT = 24;

    private final String label;
    private final String summary;

    SceneKind(String label, String summary) {
        this.label = label;
        this.summary = summary;
    }

    /** The scene's name, e.g. {@code parcel-line}. */
    public String label() {
        return label;
    }

    /** One line describing the scene. */
    public String summary() {
        return summary;
    }

    /**
     * Builds the scene.
     *
     * @throws IllegalArgumentException if the size is below {@value #MIN_WIDTH}x{@value #MIN_HEIGHT}
     *     or above 8192 on a side
     */
    public Scene create(int width, int height, long seed) {
        if (width < MIN_WIDTH || width > 8192 || height < MIN_HEIGHT || height > 8192) {
            throw new IllegalArgumentException("scene size " + width + "x" + height + " outside "
                    + MIN_WIDTH + "x" + MIN_HEIGHT + " .. 8192x8192");
        }
        return switch (this) {
            case PARCEL_LINE -> new ParcelLineScene(width, height, seed);
            case DOCK_DOOR -> new DockDoorScene(width, height, seed);
            case ORCHARD_PAN -> new OrchardPanScene(width, height, seed);
        };
    }

    /** The kind named {@code label}. */
    public static SceneKind byLabel(String label) {
        for (SceneKind k : values()) {
            if (k.label.equals(label)) {
                return k;
            }
        }
        throw new IllegalArgumentException("unknown scene \"" + label + "\"; expected one of " + labels());
    }

    /** Every scene name. */
    public static List<String> labels() {
        List<String> names = new ArrayList<>();
        for (SceneKind k : values()) {
            names.add(k.label);
        }
        return names;
    }
}
