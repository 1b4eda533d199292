package dev.afterglow.node.stats;

import java.lang.System.Logger.Level;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;

/**
 * Logs a problem the first time it is seen for a key (a sensor, a peer kind, a cause class) and
 * stays quiet after that, so a hostile peer repeating the same fault cannot flood the log; the
 * counters still count every occurrence. At most {@value #MAX_KEYS} keys are remembered, so keys
 * must come from a bounded set (a kind of fault, a configured or admitted sensor), never from what a
 * peer chooses (its address, an id it made up), or a peer could use up the keys and silence every
 * later first warning. Thread-safe.
 */
public final class OnceLog {
    private static final int MAX_KEYS = 4096;
    private static final System.Logger LOG = System.getLogger("dev.afterglow.node");
    private static final Set<String> SEEN = ConcurrentHashMap.newKeySet();

    private OnceLog() {
    }

    /** Logs {@code message} (with {@code cause}, may be null) at WARNING once per {@code key}. */
    public static void warn(String key, String message, Throwable cause) {
        if (SEEN.size() >= MAX_KEYS || !SEEN.add(key)) {
            return;
        }
        String text = message + " (logged once; later occurrences are only counted)";
        if (cause == null) {
            LOG.log(Level.WARNING, text);
        } else {
            LOG.log(Level.WARNING, text, cause);
        }
    }
}
