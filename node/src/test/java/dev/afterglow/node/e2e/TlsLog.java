package dev.afterglow.node.e2e;

import java.util.List;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.logging.Handler;
import java.util.logging.LogRecord;
import java.util.logging.Logger;

/**
 * Collects what the node's TLS code logs (the JDK's System.Logger, backed by java.util.logging when
 * no other backend is installed) while a test runs.
 */
final class TlsLog implements AutoCloseable {
    // Held strongly: java.util.logging keeps loggers only weakly.
    private final Logger logger = Logger.getLogger("dev.afterglow.node.tls");
    private final List<String> lines = new CopyOnWriteArrayList<>();
    private final Handler handler = new Handler() {
        @Override
        public void publish(LogRecord r) {
            lines.add(r.getLevel() + " " + r.getMessage());
        }

        @Override
        public void flush() {
        }

        @Override
        public void close() {
        }
    };

    TlsLog() {
        logger.addHandler(handler);
    }

    /** Lines logged so far. */
    List<String> lines() {
        return List.copyOf(lines);
    }

    /** Lines containing {@code text}. */
    long count(String text) {
        return lines.stream().filter(l -> l.contains(text)).count();
    }

    @Override
    public void close() {
        logger.removeHandler(handler);
    }
}
