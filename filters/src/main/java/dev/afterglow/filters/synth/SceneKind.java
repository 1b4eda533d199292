package dev.afterglow.filters.synth;

import java.util.ArrayList;
import java.util.List;

/**
 * The built-in scenes by name, each buildable at any size from 32x24 up and from a seed, each with
 * the sensor conditions it is meant to be seen under ({@link #sensor}).
 *
 * <p>Every scene also comes as a {@code _dark} variant ({@code parcel-line_dark}, ...): the same
 * scene seen in about 8 times less light. The scene itself (its log irradiance, the ground truth)
 * is unchanged; the variant's sensor has the frames' full scale multiplied by
 * {@value #DARK_FULL_SCALE} (the same irradiance fills an eighth of the 8-bit range, so frames
 * are dim, the read noise is relatively 8 times larger and quantisation coarser) and the
 * background-activity rate multiplied by {@value #DARK_NOISE} (noise events rise in low light:
 * common practice for this class of sensor, whose leak and shot-noise events become relatively
 * more frequent as the photocurrent falls). Everything else, including read noise in 8-bit steps,
 * stays the base scene's.
 */
public enum SceneKind {
    /** {@link ParcelLineScene}: fast motion across a textured background. */
    PARCEL_LINE(ParcelLineScene.NAME, "parcels on a roller conveyor: fast motion across a textured background", false, false),
    /** {@link DockDoorScene}: a high dynamic range. */
    DOCK_DOOR(DockDoorScene.NAME, "dim warehouse beside a sunlit loading-dock door: high dynamic range, a mover in each", false, false),
    /** {@link OrchardPanScene}: mostly static under slow camera motion. */
    ORCHARD_PAN(OrchardPanScene.NAME, "orchard under a slow camera pan with holds: mostly static", true, false),
    /** {@link FloodlitHoistScene}: a saturated light beside a read-noise-dominated corner, a pendulum across both. */
    FLOODLIT_HOIST(FloodlitHoistScene.NAME, "crate swinging on a hoist chain between a floodlight and an unlit corner: "
            + "clipped frames beside read noise (read noise 3.5 DN)", false, false),
    /** {@link StockroomPanScene}: a slow pan in low light over a rich static texture. */
    STOCKROOM_PAN(StockroomPanScene.NAME, "dim stockroom shelves under a slow camera pan with holds: "
            + "low light, 5 Hz/pixel background activity", true, false),
    /** {@link RinkShotScene}: small fast objects whose edges outrun the refractory period. */
    RINK_SHOT(RinkShotScene.NAME, "pucks shot across ice at 3 and 4 image widths per second: "
            + "crossings lost to a 0.8 ms refractory period", false, false),
    /** {@link #PARCEL_LINE} in 8x less light. */
    PARCEL_LINE_DARK(ParcelLineScene.NAME, null, false, true),
    /** {@link #DOCK_DOOR} in 8x less light. */
    DOCK_DOOR_DARK(DockDoorScene.NAME, null, false, true),
    /** {@link #ORCHARD_PAN} in 8x less light. */
    ORCHARD_PAN_DARK(OrchardPanScene.NAME, null, true, true),
    /** {@link #FLOODLIT_HOIST} in 8x less light. */
    FLOODLIT_HOIST_DARK(FloodlitHoistScene.NAME, null, false, true),
    /** {@link #STOCKROOM_PAN} in 8x less light. */
    STOCKROOM_PAN_DARK(StockroomPanScene.NAME, null, true, true),
    /** {@link #RINK_SHOT} in 8x less light. */
    RINK_SHOT_DARK(RinkShotScene.NAME, null, false, true);

    /** Smallest width a scene accepts. */
    public static final int MIN_WIDTH = 32;
    /** Smallest height a scene accepts. */
    public static final int MIN_HEIGHT = 24;
    /** Suffix of the dark variants' labels. */
    public static final String DARK_SUFFIX = "_dark";
    /** Factor on the frames' full scale in the dark variants (8x less light). */
    public static final double DARK_FULL_SCALE = 8;
    /** Factor on the background-activity rate in the dark variants. */
    public static final double DARK_NOISE = 3;

    /** Read noise of {@link #FLOODLIT_HOIST}'s frames, 8-bit steps (default 1.5). */
    static final double HOIST_READ_NOISE_DN = 3.5;
    /** Background activity of {@link #STOCKROOM_PAN}, Hz per pixel (default 1). */
    static final double STOCKROOM_NOISE_HZ = 5;
    /** Refractory period of {@link #RINK_SHOT}'s sensor, microseconds (default 100). */
    static final int RINK_REFRACTORY_US = 800;

    private final String label;
    private final String summary;
    private final boolean slow;
    private final boolean dark;

    SceneKind(String sceneName, String summary, boolean slow, boolean dark) {
        this.label = dark ? sceneName + DARK_SUFFIX : sceneName;
        this.summary = summary;
        this.slow = slow;
        this.dark = dark;
    }

    /** The scene's name, e.g. {@code parcel-line} or {@code parcel-line_dark}. */
    public String label() {
        return label;
    }

    /** One line describing the scene. */
    public String summary() {
        return dark ? base().summary + "; in 8x less light (frames' full scale x8, background activity x3)" : summary;
    }

    /** True for mostly static or slowly moving scenes (the camera pans), false for scenes with fast motion. */
    public boolean slow() {
        return slow;
    }

    /** True for the {@code _dark} variants. */
    public boolean dark() {
        return dark;
    }

    /** The bright scene this one is a variant of; itself for the bright scenes. */
    public SceneKind base() {
        return dark ? valueOf(name().substring(0, name().length() - DARK_SUFFIX.length())) : this;
    }

    /**
     * The default sensor builder for a {@code width} x {@code height} sensor with this scene's
     * conditions applied; callers may change anything on top. The first three scenes use the
     * defaults unchanged; {@code floodlit-hoist} has read noise {@value #HOIST_READ_NOISE_DN} DN,
     * {@code stockroom-pan} background activity {@value #STOCKROOM_NOISE_HZ} Hz per pixel,
     * {@code rink-shot} a refractory period of {@value #RINK_REFRACTORY_US} us; a {@code _dark}
     * variant takes its base scene's conditions with the full scale x{@value #DARK_FULL_SCALE}
     * and the background activity x{@value #DARK_NOISE}.
     */
    public SensorConfig.Builder sensor(int width, int height) {
        SensorConfig.Builder b = SensorConfig.builder(width, height);
        switch (base()) {
            case FLOODLIT_HOIST -> b.frameRange(b.fullScale(), HOIST_READ_NOISE_DN);
            case STOCKROOM_PAN -> b.backgroundRateHz(STOCKROOM_NOISE_HZ);
            case RINK_SHOT -> b.refractoryUs(RINK_REFRACTORY_US);
            default -> {
                // the defaults
            }
        }
        if (dark) {
            b.frameRange(b.fullScale() * DARK_FULL_SCALE, b.readNoiseDn());
            b.backgroundRateHz(b.backgroundRateHz() * DARK_NOISE);
        }
        return b;
    }

    /**
     * Builds the scene ({@code _dark} variants build their base scene: the light is the sensor's
     * business, see {@link #sensor}).
     *
     * @throws IllegalArgumentException if the size is below {@value #MIN_WIDTH}x{@value #MIN_HEIGHT}
     *     or above 8192 on a side
     */
    public Scene create(int width, int height, long seed) {
        if (width < MIN_WIDTH || width > 8192 || height < MIN_HEIGHT || height > 8192) {
            throw new IllegalArgumentException("scene size " + width + "x" + height + " outside "
                    + MIN_WIDTH + "x" + MIN_HEIGHT + " .. 8192x8192");
        }
        return switch (base()) {
            case PARCEL_LINE -> new ParcelLineScene(width, height, seed);
            case DOCK_DOOR -> new DockDoorScene(width, height, seed);
            case ORCHARD_PAN -> new OrchardPanScene(width, height, seed);
            case FLOODLIT_HOIST -> new FloodlitHoistScene(width, height, seed);
            case STOCKROOM_PAN -> new StockroomPanScene(width, height, seed);
            case RINK_SHOT -> new RinkShotScene(width, height, seed);
            default -> throw new IllegalStateException("no scene for " + this);
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
