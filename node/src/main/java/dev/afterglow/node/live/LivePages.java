package dev.afterglow.node.live;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.util.Map;

/**
 * The live view's static files, read once from the classpath ({@code dev/afterglow/node/live/}):
 * {@code GET /live} is the page, {@code /live/live.js} and {@code /live/live.css} its script and
 * style. Hand-written, no external resources, so the page works offline. Immutable.
 */
public final class LivePages {
    /** A file to serve. */
    public record Page(String contentType, byte[] body) {
    }

    private final Map<String, Page> pages = Map.of(
            "/live", load("live.html", "text/html; charset=utf-8"),
            "/live/live.js", load("live.js", "text/javascript; charset=utf-8"),
            "/live/live.css", load("live.css", "text/css; charset=utf-8"));

    /** The file at {@code path}, or null. */
    public Page get(String path) {
        return pages.get(path);
    }

    private static Page load(String name, String contentType) {
        try (InputStream in = LivePages.class.getResourceAsStream(name)) {
            if (in == null) {
                throw new IllegalStateException("missing resource " + name + " next to " + LivePages.class.getName());
            }
            return new Page(contentType, in.readAllBytes());
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
