package dev.afterglow.node.cli;

import dev.afterglow.filters.synth.SceneKind;

/** Parses a scene option. */
final class Scenes {
    private Scenes() {
    }

    static SceneKind parse(String option, String label) {
        try {
            return SceneKind.byLabel(label);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException(option + "=" + label + ": expected one of " + String.join(", ", SceneKind.labels()), e);
        }
    }
}
