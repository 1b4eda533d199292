package dev.afterglow.node.surge;

import dev.afterglow.node.client.SubscriberClient;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.PixelFormat;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import org.HdrHistogram.Histogram;

/**
 * Runs a sweep against a running node: generates the event loop once, connects the sensors and
 * subscribers, and for each rate runs an optional warm-up at that rate, then the measured step, then
 * waits until the node has taken in everything sent (its packet count matches and its counters stop
 * moving) and reads its counters again. Writes {@code surge.csv} and {@code surge-latency.png} into
 * the output folder and prints the table and the consistency lines.
 */
public final class Surge {
    /** CSV file name in the output folder. */
    public static final String CSV = "surge.csv";
    /** PNG file name in the output folder. */
    public static final String PNG = "surge-latency.png";
    private static final long SETTLE_MS = 300;
    private static final long DRAIN_TIMEOUT_MS = 30_000;

    private final SurgeSettings settings;
    private final PrintStream out;

    /** A run of {@code settings} that prints its progress and report to {@code out}. */
    public Surge(SurgeSettings settings, PrintStream out) {
        this.settings = settings;
        this.out = out;
    }

    /** Runs every step and writes the report; returns the steps' results. */
    public List<StepResult> run() throws IOException, InterruptedException {
        SurgeSettings s = settings;
        NodeScrape scrape = new NodeScrape(s.httpHost(), s.httpPort(), s.moreHttp());
        scrape.status(); // fails early if the node's HTTP endpoints cannot be reached
        Files.createDirectories(s.out());
        out.printf(Locale.ROOT, "surge: %d sensor(s) %dx%d (%s) over %s to %s:%d, %d subscriber(s) each, rates %s per sensor,"
                        + " %.1f s steps after %.1f s warm-up%n",
                s.sensors(), s.width(), s.height(), s.scene().label(), s.transportName().toUpperCase(Locale.ROOT), s.nodeHost(), s.nodePort(),
                s.subscribers(), s.rates(), s.stepSeconds(), s.warmupSeconds());
        long g0 = System.nanoTime();
        SceneLoop loop = SceneLoop.generate(s.scene(), s.width(), s.height(), s.seed());
        out.printf(Locale.ROOT, "surge: event loop %d events per %.1f s of %s (%.2f M events/s), generated in %.1f s%n",
                loop.size(), SceneLoop.LOOP_US * 1e-6, loop.scene(), loop.eventsPerSecond() / 1e6, (System.nanoTime() - g0) * 1e-9);

        List<String> ids = new ArrayList<>();
        for (int i = 0; i < s.sensors(); i++) {
            ids.add(SurgeSettings.sensorId(i));
        }
        List<SensorSender> senders = new ArrayList<>();
        List<SubscriberProbe> probes = new ArrayList<>();
        FrameTopicReader frameTopic = s.kafka() != null && s.kafka().frameTopic() != null
                ? new FrameTopicReader(s.kafka().bootstrap(), s.kafka().frameTopic(), ids) : null;
        ExecutorService pool = Executors.newFixedThreadPool(s.sensors(), r -> {
            Thread t = new Thread(r, "surge-sender");
            t.setDaemon(true);
            return t;
        });
        try {
            for (int i = 0; i < s.sensors(); i++) {
                senders.add(s.kafka() != null
                        ? SensorSender.kafka(s.kafka().bootstrap(), s.kafka().eventTopic(), ids.get(i), i, s.width(), s.height())
                        : s.udp()
                        ? SensorSender.udp(s.nodeHost(), s.nodePort(), ids.get(i), i)
                        : SensorSender.tcp(s.nodeHost(), s.nodePort(), ids.get(i), i, s.width(), s.height()));
            }
            Map<String, NodeScrape.SensorStatus> status = awaitSensors(scrape, ids);
            Set<String> views = new LinkedHashSet<>();
            for (String id : ids) {
                NodeScrape.SensorStatus st = status.get(id);
                views.add(String.format(Locale.ROOT, "%dx%d at %s Hz, chain %s", st.width(), st.height(),
                        trim(st.frameRateHz()), st.chain()));
            }
            out.println("surge: the node runs the sensors " + String.join("; ", views));
            for (int i = 0; i < s.sensors(); i++) {
                double nodeRate = status.get(ids.get(i)).frameRateHz();
                if (frameTopic != null) {
                    probes.add(new SubscriberProbe(frameTopic.feed(ids.get(i)), null, senders.get(i), nodeRate, s.subscriberRateHz(),
                            "surge-topic-" + i));
                    continue;
                }
                for (int j = 0; j < s.subscribers(); j++) {
                    SubscriberClient c = SubscriberClient.connect(s.subscribeHost(), s.subscribePort(), ids.get(i),
                            s.subscriberRateHz(), PixelFormat.PIXEL_FORMAT_GRAY8);
                    probes.add(new SubscriberProbe(c, senders.get(i), nodeRate, s.subscriberRateHz(), "surge-sub-" + i + "-" + j));
                }
            }
            List<StepResult> results = new ArrayList<>();
            for (int k = 0; k < s.rates().size(); k++) {
                results.add(step(k, scrape, ids, senders, probes, loop, pool));
                StepResult r = results.get(results.size() - 1);
                out.printf(Locale.ROOT, "surge: step %d/%d (%s): offered %.3f M events/s, applied %.3f M events/s, shed %s%%,"
                                + " frame age p99 %s ms (generator clock), %s ms (sensor to publish), difference %d%n",
                        r.step(), s.rates().size(), r.rateLabel(), r.offeredPerSecond() / 1e6, r.applied() / r.seconds() / 1e6,
                        col(r, "shed_pct"), col(r, "e2e_p99_ms"), col(r, "s2p_p99_ms"), r.difference());
            }
            Path csv = s.out().resolve(CSV);
            Path png = s.out().resolve(PNG);
            SurgeReport.writeCsv(csv, results);
            LatencyPlot.write(png, results, String.format(Locale.ROOT, "%d sensor(s) %dx%d %s over %s, %d subscriber(s) each; %s",
                    s.sensors(), s.width(), s.height(), s.scene().label(), s.transportName(), frameTopic != null ? 1 : s.subscribers(),
                    String.join("; ", views)));
            SurgeReport.print(out, results);
            out.println("surge: wrote " + csv + " and " + png);
            return results;
        } finally {
            pool.shutdownNow();
            for (SubscriberProbe p : probes) {
                p.close();
            }
            for (SensorSender sender : senders) {
                sender.close();
            }
            if (frameTopic != null) {
                frameTopic.close();
            }
        }
    }

    private StepResult step(int k, NodeScrape scrape, List<String> ids, List<SensorSender> senders,
            List<SubscriberProbe> probes, SceneLoop loop, ExecutorService pool) throws IOException, InterruptedException {
        SurgeSettings s = settings;
        double rate = s.rates().rates().get(k);
        boolean paced = !Double.isInfinite(rate);
        PacketPlan plan = PacketPlan.of(loop, rate, s.packetUs());
        if (s.warmupSeconds() > 0) {
            NodeScrape.Snapshot start = scrape.counters(ids);
            List<SensorSender.Phase> warm = phase(pool, senders, plan, s.warmupSeconds(), paced, false);
            drain(scrape, ids, start, warm);
            Thread.sleep(SETTLE_MS);
        }
        NodeScrape.Snapshot before = scrape.counters(ids);
        for (SubscriberProbe p : probes) {
            p.open();
        }
        List<SensorSender.Phase> phases = phase(pool, senders, plan, s.stepSeconds(), paced, true);
        boolean drained = drain(scrape, ids, before, phases);
        Thread.sleep(SETTLE_MS);
        NodeScrape.Snapshot after = scrape.counters(ids);
        for (SensorSender sender : senders) {
            sender.closeWindow();
        }
        long[] frames = new long[probes.size()];
        long missed = 0;
        long untimed = 0;
        Histogram own = histogram();
        Histogram s2p = histogram();
        Histogram a2p = histogram();
        for (int i = 0; i < probes.size(); i++) {
            SubscriberProbe p = probes.get(i);
            if (p.failure() != null) {
                throw new IOException("subscriber " + i + " stopped: " + p.failure().getMessage(), p.failure());
            }
            SubscriberProbe.Result r = p.harvest();
            frames[i] = r.frames();
            missed += r.missed();
            untimed += r.untimed();
            own.add(r.ownClock());
            s2p.add(r.sensorToPublish());
            a2p.add(r.arrivalToPublish());
        }
        long sent = 0;
        long packets = 0;
        double seconds = 0;
        double window = 0;
        for (SensorSender.Phase p : phases) {
            sent += p.events();
            packets += p.packets();
            seconds += p.seconds() / phases.size();
            window += (p.endSensorUs() - p.firstSensorUs()) * 1e-6 / phases.size();
        }
        return new StepResult(k + 1, s.rates().labels().get(k), seconds, window, ids.size(), sent, packets,
                delta(before, after, ids, NodeCounter.EVENTS_TCP) + delta(before, after, ids, NodeCounter.EVENTS_UDP)
                        + delta(before, after, ids, NodeCounter.EVENTS_KAFKA) + delta(before, after, ids, NodeCounter.KAFKA_SKIPPED_EVENTS),
                delta(before, after, ids, NodeCounter.EVENTS_RECEIVED),
                deltaChainInput(before, after, ids),
                delta(before, after, ids, NodeCounter.EVENTS_OUTSIDE_SENSOR),
                delta(before, after, ids, NodeCounter.EVENTS_LATE),
                // records a Kafka-fed node skipped for age are shed for the latency budget too
                delta(before, after, ids, NodeCounter.EVENTS_SHED_LATENCY) + delta(before, after, ids, NodeCounter.KAFKA_SKIPPED_EVENTS),
                delta(before, after, ids, NodeCounter.EVENTS_SHED_QUEUE),
                delta(before, after, ids, NodeCounter.EVENTS_REJECTED),
                delta(before, after, ids, NodeCounter.PACKETS_TCP) + delta(before, after, ids, NodeCounter.PACKETS_UDP)
                        + delta(before, after, ids, NodeCounter.PACKETS_KAFKA) + delta(before, after, ids, NodeCounter.KAFKA_SKIPPED_RECORDS),
                delta(before, after, ids, NodeCounter.PACKETS_MALFORMED),
                delta(before, after, ids, NodeCounter.UDP_LOST),
                delta(before, after, ids, NodeCounter.FRAMES_PUBLISHED),
                delta(before, after, ids, NodeCounter.FRAMES_MISSED),
                delta(before, after, ids, NodeCounter.FRAMES_SKIPPED),
                frames, missed, untimed, own, s2p, a2p, drained);
    }

    private List<SensorSender.Phase> phase(ExecutorService pool, List<SensorSender> senders, PacketPlan plan,
            double seconds, boolean paced, boolean measured) throws IOException, InterruptedException {
        long durationNs = Math.round(seconds * 1e9);
        List<Future<SensorSender.Phase>> futures = new ArrayList<>();
        for (SensorSender sender : senders) {
            futures.add(pool.submit(() -> sender.run(plan, durationNs, paced, measured)));
        }
        List<SensorSender.Phase> phases = new ArrayList<>();
        for (Future<SensorSender.Phase> f : futures) {
            try {
                phases.add(f.get());
            } catch (ExecutionException e) {
                Throwable cause = e.getCause();
                if (cause instanceof IOException io) {
                    throw new IOException("sending to the node failed: " + io.getMessage(), io);
                }
                throw new IllegalStateException(cause);
            }
        }
        return phases;
    }

    /** Packets the node took from any transport (a Kafka-fed node's skipped records included). */
    private static long packetsIn(NodeScrape.SensorCounts c) {
        return c.get(NodeCounter.PACKETS_TCP) + c.get(NodeCounter.PACKETS_UDP) + c.get(NodeCounter.PACKETS_KAFKA)
                + c.get(NodeCounter.KAFKA_SKIPPED_RECORDS);
    }

    /**
     * Waits until the node has counted every packet sent (TCP; over UDP lost datagrams never come),
     * no packet is pending and its event counters held still between two reads; false on timeout.
     */
    private boolean drain(NodeScrape scrape, List<String> ids, NodeScrape.Snapshot before, List<SensorSender.Phase> phases)
            throws IOException, InterruptedException {
        long deadline = System.nanoTime() + DRAIN_TIMEOUT_MS * 1_000_000;
        long previous = -1;
        while (true) {
            NodeScrape.Snapshot now = scrape.counters(ids);
            boolean settled = true;
            long sum = 0;
            for (int i = 0; i < ids.size(); i++) {
                NodeScrape.SensorCounts a = now.sensor(ids.get(i));
                NodeScrape.SensorCounts b = before.sensor(ids.get(i));
                long counted = packetsIn(a) - packetsIn(b);
                settled &= a.pending() == 0 && (settings.udp() || counted >= phases.get(i).packets());
                sum += counted + a.get(NodeCounter.EVENTS_RECEIVED) + a.get(NodeCounter.EVENTS_SHED_LATENCY)
                        + a.get(NodeCounter.EVENTS_SHED_QUEUE) + a.chainInput();
            }
            if (settled && sum == previous) {
                return true;
            }
            previous = settled ? sum : -1;
            if (System.nanoTime() > deadline) {
                return false;
            }
            Thread.sleep(settings.udp() ? 100 : 50);
        }
    }

    private Map<String, NodeScrape.SensorStatus> awaitSensors(NodeScrape scrape, List<String> ids)
            throws IOException, InterruptedException {
        long deadline = System.nanoTime() + 5_000_000_000L;
        while (true) {
            Map<String, NodeScrape.SensorStatus> status = scrape.status();
            List<String> missing = NodeScrape.missing(status, ids);
            if (missing.isEmpty()) {
                for (String id : ids) {
                    NodeScrape.SensorStatus st = status.get(id);
                    if (st.width() != settings.width() || st.height() != settings.height()) {
                        throw new IOException("the node has sensor " + id + " as " + st.width() + "x" + st.height()
                                + ", but --width/--height say " + settings.width() + "x" + settings.height());
                    }
                }
                return status;
            }
            if (System.nanoTime() > deadline) {
                throw new IOException("the node does not know sensor(s) " + String.join(", ", missing)
                        + (settings.udp() ? ": over UDP it takes only sensors listed in its configuration (or introduced over TCP)"
                                : ": it did not accept the TCP hello (see its counters for unknown sensors or geometry mismatches)"));
            }
            Thread.sleep(50);
        }
    }

    private static long delta(NodeScrape.Snapshot before, NodeScrape.Snapshot after, List<String> ids, NodeCounter c) {
        long sum = 0;
        for (String id : ids) {
            sum += after.sensor(id).get(c) - before.sensor(id).get(c);
        }
        return sum;
    }

    private static long deltaChainInput(NodeScrape.Snapshot before, NodeScrape.Snapshot after, List<String> ids) {
        long sum = 0;
        for (String id : ids) {
            sum += after.sensor(id).chainInput() - before.sensor(id).chainInput();
        }
        return sum;
    }

    private static Histogram histogram() {
        return new Histogram(3_600_000_000L, 3);
    }

    private static String col(StepResult r, String name) {
        for (StepResult.Column c : StepResult.COLUMNS) {
            if (c.name().equals(name)) {
                String v = r.value(c);
                return v.isEmpty() ? "-" : v;
            }
        }
        throw new IllegalArgumentException(name);
    }

    private static String trim(double v) {
        return v == Math.rint(v) ? Long.toString((long) v) : Double.toString(v);
    }
}
