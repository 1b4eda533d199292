package dev.afterglow.node.hostile;

import java.util.ArrayList;
import java.util.List;
import java.util.function.BooleanSupplier;

/**
 * A legitimate sensor and subscriber on the node while a test attacks it, and the verdict on them.
 * {@link #assertUnharmed} checks, over the window the test names (attack included, and a period
 * after it): the subscriber got at least {@link #MIN_FRAME_SHARE} of the sensor's grid frames and
 * every frame was well formed; the sensor could send everything and the node neither wrote to nor
 * closed its connection; the sensor's counters add up (every event offered is counted once by
 * transport and ends reached-the-chain, shed or rejected, README "Counters and endpoints"), the
 * transport count equals what the sensor sent, no foreign event reached its chain and at most 1%
 * of its own events were lost on the way; {@code /metrics} and {@code /ready} answered 200 within
 * 2 s throughout; no internal error was counted; and the node's RSS stayed below the bound.
 */
final class LegitRun implements AutoCloseable {
    static final double RATE_HZ = 100;
    static final double MIN_FRAME_SHARE = 0.99;
    /** Headroom above heap and direct-memory limits for metaspace, code, thread stacks and GC (common practice for a JVM's RSS). */
    static final int NATIVE_HEADROOM_MB = 200;

    static final String TCP_EVENTS = "afterglow_ingest_tcp_events_total";
    static final String UDP_EVENTS = "afterglow_ingest_udp_events_total";
    static final String APPLIED = "afterglow_ingest_events_total";
    static final String SHED_LATENCY = "afterglow_shed_latency_events_total";
    static final String SHED_QUEUE = "afterglow_shed_queue_events_total";
    static final String REJECTED = "afterglow_ingest_rejected_events_total";
    static final String LATE = "afterglow_ingest_events_late_total";
    static final String OUTSIDE = "afterglow_ingest_events_outside_total";
    static final String PENDING = "afterglow_pending_packets";
    static final String INTERNAL_ERRORS = "afterglow_internal_errors_total";

    final HostileNode node;
    final LegitSensor sensor;
    private final NodeFixture fixture;
    private final LegitSubscriber subscriber;
    private final NodeWatch watch;
    private final Scrape before;
    private Scrape after;
    private Scrape atWindow;
    private long sentAtWindow;
    private long fromUs = -1;
    private long toUs = -1;
    private long sent;

    private LegitRun(NodeFixture fixture, LegitSensor sensor, LegitSubscriber subscriber, NodeWatch watch, Scrape before) {
        this.fixture = fixture;
        this.node = fixture.node();
        this.sensor = sensor;
        this.subscriber = subscriber;
        this.watch = watch;
        this.before = before;
    }

    /** Starts the sensor, waits until the node knows it, subscribes, and waits for a second of frames. */
    static LegitRun start(NodeFixture fixture, String sensorId, LegitSensor.Transport transport, String token) throws Exception {
        return start(fixture, sensorId, transport, token, 0, 0);
    }

    /** {@link #start(NodeFixture, String, LegitSensor.Transport, String)} with a late start of the sensor's packets. */
    static LegitRun start(NodeFixture fixture, String sensorId, LegitSensor.Transport transport, String token, long lateForUs,
            long delayUs) throws Exception {
        HostileNode node = fixture.node();
        Scrape before = node.metrics(5_000);
        NodeWatch watch = new NodeWatch(node);
        LegitSensor sensor = LegitSensor.start(node, sensorId, transport, token, lateForUs, delayUs);
        waitFor(() -> known(node, sensorId), 5_000, "the node to list sensor " + sensorId);
        LegitSubscriber subscriber = LegitSubscriber.start(node, sensorId, LegitSensor.WIDTH, LegitSensor.HEIGHT, RATE_HZ,
                fixture.budgetMs);
        LegitRun run = new LegitRun(fixture, sensor, subscriber, watch, before);
        long second = Math.round(RATE_HZ);
        if (!waitFor(() -> subscriber.frames() >= second || !subscriber.problems().isEmpty(), 15_000)) {
            run.close();
            throw new AssertionError("no legitimate frames before the attack: " + subscriber.problems()
                    + " sensor failure " + sensor.failure() + "\n" + node.outputTail(30));
        }
        if (!subscriber.problems().isEmpty() || sensor.failure() != null) {
            run.close();
            throw new AssertionError("the legitimate stream failed before the attack: " + subscriber.problems()
                    + " sensor failure " + sensor.failure());
        }
        return run;
    }

    private static boolean known(HostileNode node, String sensorId) {
        try {
            RawHttp.Response r = RawHttp.get(node.httpPort, "/status", 2_000);
            return r.status() == 200 && r.body().contains("\"id\":\"" + sensorId + "\"");
        } catch (Exception e) {
            return false;
        }
    }

    /** The legitimate sensor's time now, in microseconds. */
    long nowUs() {
        return sensor.nowUs();
    }

    /**
     * Starts the measured window: reads the counters and returns the sensor's time now. Events the
     * node shed while its JIT warmed up, before the window, do not count against the attack.
     */
    long startWindow() throws java.io.IOException {
        atWindow = node.metrics(5_000);
        sentAtWindow = sensor.eventsSent();
        return sensor.nowUs();
    }

    /**
     * Ends the run: the sensor streams until {@code toUs} plus 0.3 s, the subscriber waits for the
     * frames up to {@code toUs}, then the sensor stops and the node's counters are read once they
     * have caught up with everything sent.
     */
    void finish(long fromUs, long toUs) throws Exception {
        this.fromUs = fromUs;
        this.toUs = toUs;
        long periodUs = Math.round(1e6 / RATE_HZ);
        waitFor(() -> sensor.nowUs() >= toUs + 300_000 || sensor.failure() != null, 30_000);
        waitFor(() -> subscriber.newestFrameUs() >= toUs - periodUs, 3_000);
        sensor.stop();
        sent = sensor.eventsSent();
        Scrape[] last = {null};
        waitFor(() -> {
            try {
                Scrape s = node.metrics(2_000);
                last[0] = s;
                long tcp = delta(s, TCP_EVENTS);
                long udp = delta(s, UDP_EVENTS);
                long arrived = sensor.transport == LegitSensor.Transport.TCP ? tcp : udp;
                return arrived >= sent && s.count(PENDING, sensor.id) == 0 && tcp + udp == delta(s, APPLIED)
                        + delta(s, SHED_LATENCY) + delta(s, SHED_QUEUE) + delta(s, REJECTED);
            } catch (Exception e) {
                return false;
            }
        }, 5_000);
        subscriber.close();
        watch.close();
        if (last[0] == null) {
            throw new AssertionError("/metrics did not answer 200 within 2 s after the attack; the node's last output:\n"
                    + node.outputTail(20) + "\nwatch: " + watch.problems());
        }
        after = last[0];
    }

    private long windowDelta(String name) {
        return after.count(name, sensor.id) - atWindow.count(name, sensor.id);
    }

    private long delta(Scrape s, String name) {
        return s.count(name, sensor.id) - before.count(name, sensor.id);
    }

    /** Node-wide counter {@code name} moved by this much during the run (after {@link #finish}). */
    long nodeDelta(String name) {
        return after.count(name) - before.count(name);
    }

    /** This sensor's counter {@code name} moved by this much during the run (after {@link #finish}). */
    long sensorDelta(String name) {
        return delta(after, name);
    }

    /** Metrics read at the end of {@link #finish}. */
    Scrape after() {
        return after;
    }

    /** Metrics read before the run. */
    Scrape before() {
        return before;
    }

    /** Events the legitimate sensor sent. */
    long sent() {
        return sent;
    }

    /** {@link #assertUnharmed(long, long)} for an attack that sent the sensor no events of its own. */
    void assertUnharmed() {
        assertUnharmed(0, 0);
    }

    /**
     * The verdict on the legitimate sensor (see the class comment).
     *
     * @param foreignClaimed events foreign packets claimed for this sensor (their event_count), which may be counted
     *        by transport and must then be rejected
     * @param foreignApplicable foreign events that may reach this sensor's chain (unauthenticated UDP from an allowed
     *        source, in-range fields)
     */
    void assertUnharmed(long foreignClaimed, long foreignApplicable) {
        if (after == null || atWindow == null) {
            throw new IllegalStateException("startWindow() and finish() first");
        }
        List<String> failures = new ArrayList<>();
        if (sensor.failure() != null) {
            failures.add("the legitimate sensor could not send: " + sensor.failure());
        }
        if (sensor.nodeInterfered() != null) {
            failures.add(sensor.nodeInterfered());
        }
        for (String p : subscriber.problems()) {
            failures.add("legitimate subscriber: " + p);
        }
        long expected = subscriber.expected(fromUs, toUs);
        long received = subscriber.received(fromUs, toUs);
        if (received < Math.ceil(MIN_FRAME_SHARE * expected)) {
            failures.add("the legitimate subscriber got " + received + " of " + expected + " frames in ["
                    + fromUs + ", " + toUs + "] us of sensor time (at least " + (int) (MIN_FRAME_SHARE * 100) + "% required)");
        }
        for (String p : watch.problems()) {
            failures.add("node: " + p);
        }
        long rssLimit = NodeFixture.HEAP_MB + fixture.directMb + NATIVE_HEADROOM_MB;
        if (watch.maxRssMb() > rssLimit) {
            failures.add("node RSS reached " + watch.maxRssMb() + " MiB > " + rssLimit + " MiB");
        }
        long tcp = delta(after, TCP_EVENTS);
        long udp = delta(after, UDP_EVENTS);
        long applied = delta(after, APPLIED);
        long shed = delta(after, SHED_LATENCY) + delta(after, SHED_QUEUE);
        long rejected = delta(after, REJECTED);
        long late = delta(after, LATE);
        long outside = delta(after, OUTSIDE);
        String counts = "sent=" + sent + " tcp=" + tcp + " udp=" + udp + " applied=" + applied + " shed=" + shed
                + " rejected=" + rejected + " late=" + late + " outside=" + outside;
        if (tcp + udp != applied + shed + rejected) {
            failures.add("counters do not add up: tcp + udp != applied + shed + rejected: " + counts);
        }
        if (sensor.transport == LegitSensor.Transport.TCP) {
            if (tcp != sent) {
                failures.add("TCP events counted for the sensor differ from what it sent: " + counts);
            }
            if (udp > foreignClaimed) {
                failures.add("more UDP events counted for a TCP sensor than the attack claimed (" + foreignClaimed + "): " + counts);
            }
        } else if (udp < sent || udp > sent + foreignClaimed || tcp != 0) {
            failures.add("UDP events counted for the sensor are not what it sent plus at most " + foreignClaimed
                    + " foreign: " + counts);
        }
        if (applied > sent + foreignApplicable) {
            failures.add("more events reached the sensor's chain than it sent plus " + foreignApplicable + " allowed foreign: " + counts);
        }
        // Loss over the window: events that did not reach the chain, or reached it late or outside the sensor.
        long sentInWindow = sent - sentAtWindow;
        long keptInWindow = windowDelta(APPLIED) - windowDelta(LATE) - windowDelta(OUTSIDE) - foreignApplicable;
        if (keptInWindow < Math.ceil(0.99 * sentInWindow)) {
            failures.add("the sensor lost more than 1% of its events in the window (shed, rejected, late or outside): sent "
                    + sentInWindow + ", kept " + keptInWindow + " (shed " + (windowDelta(SHED_LATENCY) + windowDelta(SHED_QUEUE))
                    + ", rejected " + windowDelta(REJECTED) + ", late " + windowDelta(LATE) + ", outside " + windowDelta(OUTSIDE)
                    + "); whole run: " + counts);
        }
        long internal = nodeDelta(INTERNAL_ERRORS);
        if (internal != 0) {
            failures.add("the node counted " + internal + " internal errors");
        }
        String summary = "legit " + sensor.id + ": frames " + received + "/" + expected + ", " + counts + ", metrics scrapes "
                + watch.scrapes() + " slowest " + watch.slowestMs() + " ms, max RSS " + watch.maxRssMb() + " MiB";
        System.out.println(summary + "\n  counters: " + after.sensorCounters(sensor.id));
        if (!failures.isEmpty()) {
            throw new AssertionError("the attack harmed the legitimate sensor or the node (" + summary + "):\n - "
                    + String.join("\n - ", failures) + "\n   the sensor's counters at the end: " + after.sensorCounters(sensor.id));
        }
    }

    @Override
    public void close() throws Exception {
        sensor.close();
        subscriber.close();
        watch.close();
    }

    /** Polls {@code condition} every 20 ms until it holds or {@code millis} pass; returns whether it held. */
    static boolean waitFor(BooleanSupplier condition, long millis) {
        long deadline = System.nanoTime() + millis * 1_000_000L;
        while (!condition.getAsBoolean()) {
            if (System.nanoTime() > deadline) {
                return false;
            }
            try {
                Thread.sleep(20);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                return false;
            }
        }
        return true;
    }

    /** {@link #waitFor(BooleanSupplier, long)} that fails naming what it waited for. */
    static void waitFor(BooleanSupplier condition, long millis, String what) {
        if (!waitFor(condition, millis)) {
            throw new AssertionError("timed out after " + millis + " ms waiting for " + what);
        }
    }
}
