package dev.afterglow.node.hostile;

import java.util.ArrayList;
import java.util.List;

/**
 * Watches the node from 127.0.0.1 while a test runs: every {@link #PERIOD_MS} it asks
 * {@code /metrics} (must answer 200 within {@link #DEADLINE_MS} and parse, with no counter negative
 * or not finite) and {@code /ready} (must answer 200: no attack here may stall a pipeline), and
 * reads the node's RSS.
 */
final class NodeWatch implements AutoCloseable {
    static final int PERIOD_MS = 250;
    static final int DEADLINE_MS = 2_000;

    private final HostileNode node;
    private final Thread thread;
    private final List<String> problems = new ArrayList<>();
    private volatile boolean running = true;
    private volatile long scrapes;
    private volatile long slowestMs;
    private volatile long maxRssMb;

    NodeWatch(HostileNode node) {
        this.node = node;
        this.thread = new Thread(this::run, "node-watch");
        thread.setDaemon(true);
        thread.start();
    }

    private void run() {
        while (running) {
            long t0 = System.nanoTime();
            try {
                RawHttp.Response m = RawHttp.get(node.httpPort, "/metrics", DEADLINE_MS);
                slowestMs = Math.max(slowestMs, m.millis());
                if (m.status() != 200) {
                    problem("/metrics answered " + m.status());
                } else {
                    Scrape s = Scrape.parse(m.body());
                    if (s.size() == 0) {
                        problem("/metrics answered 200 with no samples");
                    }
                    List<String> broken = s.brokenCounters();
                    if (!broken.isEmpty()) {
                        problem("/metrics has counters below zero or not finite: " + broken);
                    }
                }
                scrapes++;
            } catch (Exception e) {
                problem("/metrics did not answer within " + DEADLINE_MS + " ms: " + e);
            }
            try {
                RawHttp.Response r = RawHttp.get(node.httpPort, "/ready", DEADLINE_MS);
                if (r.status() != 200) {
                    problem("/ready answered " + r.status() + ": " + r.body().trim());
                }
            } catch (Exception e) {
                problem("/ready did not answer within " + DEADLINE_MS + " ms: " + e);
            }
            maxRssMb = Math.max(maxRssMb, node.rssMb());
            long sleep = PERIOD_MS - (System.nanoTime() - t0) / 1_000_000;
            if (sleep > 0) {
                try {
                    Thread.sleep(sleep);
                } catch (InterruptedException e) {
                    return;
                }
            }
        }
    }

    private void problem(String what) {
        synchronized (problems) {
            if (problems.size() < 20) {
                problems.add(what);
            }
        }
    }

    List<String> problems() {
        synchronized (problems) {
            return new ArrayList<>(problems);
        }
    }

    long scrapes() {
        return scrapes;
    }

    long slowestMs() {
        return slowestMs;
    }

    long maxRssMb() {
        return Math.max(maxRssMb, node.rssMb());
    }

    @Override
    public void close() throws InterruptedException {
        running = false;
        thread.interrupt();
        thread.join(5_000);
    }
}
