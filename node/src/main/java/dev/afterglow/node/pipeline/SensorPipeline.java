package dev.afterglow.node.pipeline;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.filters.recon.ComplementaryFilter;
import dev.afterglow.metrics.LatencyRecorder;
import dev.afterglow.metrics.StageTimers;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.node.config.ToneMapText;
import dev.afterglow.node.live.LiveTap;
import dev.afterglow.node.publish.FrameData;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.proto.v1.EventPacket;
import dev.afterglow.proto.v1.Provenance;
import dev.afterglow.proto.v1.SensorFrame;
import dev.afterglow.proto.v1.StageCount;
import io.netty.channel.EventLoop;
import java.util.List;
import java.util.concurrent.CompletableFuture;
import java.util.concurrent.ScheduledFuture;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * One sensor's processing: decode, chain, frame schedule, readout and publishing, all on one
 * pipeline thread ({@link #loop()}), so the chain's state needs no locks.
 *
 * <p>Packets are handed over from I/O threads through {@link #offerPacket}; at most
 * {@code maxPendingPackets} wait, beyond that new packets are shed (counted). On the pipeline
 * thread a packet whose newest event is older than the latency budget, less twice the mean time a
 * packet takes to process (sensor time mapped to host time by {@link ClockMapper}), is shed whole,
 * so the backlog drains at the cost of those events and frames leave within the budget. Every event
 * offered is counted once by transport and then lands in exactly one of: reached the chain, shed
 * (queue or budget), or rejected with its packet (malformed, UDP duplicate or late).
 *
 * <p>Frames: at sensor times {@code T_k = floor(k · 10^6 / rate)} us. Events before T_k are applied,
 * the reconstruction is read out at T_k and published, then later events are applied. Frame times
 * already older than the budget when due are skipped (counted) except the newest. While the sensor
 * is connected but quiet, a timer publishes the frames whose times have passed (mapped to host
 * time) by more than the budget. Optionally a frame is also read out after every N applied events.
 * While nobody subscribes to the sensor or watches its live view, frame times pass without a
 * readout (counted as unread).
 *
 * <p>Time rules: events older than the last published frame are dropped as late (counted). A
 * packet more than {@link #RESTART_THRESHOLD_US} older than the last frame means the sensor's
 * clock restarted: the sensor's state is rebuilt and counted.
 */
public final class SensorPipeline {
    /** A jump back by more than this many microseconds of sensor time resets the sensor's state. */
    public static final long RESTART_THRESHOLD_US = 10_000_000;

    private final String id;
    private final int width;
    private final int height;
    private final EventLoop loop;
    private final FramePublisher publisher;
    private final NodeClock clock;
    private final Counters counters;
    private final int maxPending;
    private final long maxPendingBytes;
    private final AtomicInteger pending = new AtomicInteger();
    private final java.util.concurrent.atomic.AtomicLong pendingBytes = new java.util.concurrent.atomic.AtomicLong();
    private final EventPacketCodec codec;
    private final EventBatch batch;
    private final EventBatch tail;
    private final DecodeResult decoded = new DecodeResult();
    private final ClockMapper clockMapper = new ClockMapper();
    private final UdpSequence udpSequence = new UdpSequence();
    private final float[] log;
    private final byte[] gray;
    private final LatencyRecorder sensorToPublish = new LatencyRecorder();
    private final LatencyRecorder readoutDuration = new LatencyRecorder();
    private final LatencyRecorder arrivalToApplied = new LatencyRecorder();
    private final LatencyRecorder readoutToSocket = LatencyRecorder.forConcurrentWriters();
    private volatile long lagNanos;
    private final LiveTap live;

    private volatile SensorConfig config;
    private volatile Chain chain;
    private volatile StageTimers stageTimers;
    private ToneMapper toneMapper;
    private long budgetUs;
    /**
     * Mean time to process one packet, frames included (moving average over ~16 packets); twice it
     * is kept free of the budget. An average, so one packet held up by a pause does not shed the
     * packets queued behind it.
     */
    private long workMeanUs;
    private double rateHz;

    private boolean scheduleStarted;
    private long frameIndex;
    private long nextFrameUs;
    private long lastFrameUs = Long.MIN_VALUE;
    private long windowStartUs;
    private long sequence;
    private long newestArrivalUs;
    private long eventsSinceFrame;
    private long droppedSinceFrame;
    private long[] stageInAtFrame;
    private long[] stageOutAtFrame;
    private int grayReadyFor = -1;
    private volatile boolean connected;
    private long lastPacketHostUs;
    private ScheduledFuture<?> idleTimer;
    private long lastSensorFrameUs;

    /**
     * @param config validated sensor settings (geometry, chain, rate, budget)
     * @param loop the pipeline thread this sensor lives on
     */
    public SensorPipeline(SensorConfig config, EventLoop loop, FramePublisher publisher, NodeClock clock,
            Counters counters, int maxPendingPackets, long maxPendingBytes, int maxEventsPerPacket) {
        this.id = config.id;
        this.width = config.width;
        this.height = config.height;
        this.loop = loop;
        this.publisher = publisher;
        this.clock = clock;
        this.counters = counters;
        this.maxPending = maxPendingPackets;
        this.maxPendingBytes = maxPendingBytes;
        this.codec = new EventPacketCodec(width, height);
        this.batch = new EventBatch(maxEventsPerPacket);
        this.tail = new EventBatch(maxEventsPerPacket);
        this.log = new float[width * height];
        this.gray = new byte[width * height];
        this.live = new LiveTap(width, height, clock, counters);
        applyConfig(config, Chain.build(config.chainSpec(), width, height));
    }

    private void applyConfig(SensorConfig c, Chain built) {
        this.config = c;
        if (built != chain) {
            this.chain = built;
            this.stageTimers = new StageTimers(built);
            this.stageInAtFrame = new long[built.stages().size()];
            this.stageOutAtFrame = new long[built.stages().size()];
            markStageCounts();
        }
        this.toneMapper = new ToneMapper(ToneMapText.parse("tone-map", c.toneMap));
        this.budgetUs = Math.round(c.latencyBudgetMs * 1000);
        if (scheduleStarted && c.frameRateHz != rateHz) {
            // Keep the next frame time; continue the grid of the new rate from there.
            this.frameIndex = (long) Math.ceil(nextFrameUs * c.frameRateHz / 1e6 - 1e-9);
            this.nextFrameUs = frameTime(frameIndex, c.frameRateHz);
        }
        this.rateHz = c.frameRateHz;
    }

    private static long frameTime(long k, double rateHz) {
        return (long) Math.floor(k * 1e6 / rateHz + 1e-6);
    }

    /** Sensor id. */
    public String id() {
        return id;
    }

    public int width() {
        return width;
    }

    public int height() {
        return height;
    }

    /** The pipeline thread. */
    public EventLoop loop() {
        return loop;
    }

    /** This sensor's counters. */
    public Counters counters() {
        return counters;
    }

    /** Current settings. */
    public SensorConfig config() {
        return config;
    }

    /** Current chain (for reading counters; its state belongs to the pipeline thread). */
    public Chain chain() {
        return chain;
    }

    /** Per-packet stage times of the current chain (its {@link StageTimers#chain()} is the chain they time). */
    public StageTimers stageTimers() {
        return stageTimers;
    }

    /** Packets waiting for the pipeline thread. */
    public int pendingPackets() {
        return pending.get();
    }

    /**
     * Replaces the settings at run time (from any thread). A different chain is built afresh (its
     * image starts again from zero); the same chain keeps its state. Takes effect before the next
     * packet or frame; the returned future completes once it has.
     */
    public CompletableFuture<Void> reconfigure(SensorConfig next) {
        Chain fresh = Chain.build(next.chainSpec(), width, height); // built here, off the pipeline thread
        CompletableFuture<Void> applied = new CompletableFuture<>();
        loop.execute(() -> {
            applyConfig(next, next.chainSpec().equals(chain.spec()) ? chain : fresh);
            applied.complete(null);
        });
        return applied;
    }

    /** Marks the sensor connected (idle frames are published while connected) or not. Any thread. */
    public void setConnected(boolean value) {
        connected = value;
        loop.execute(() -> {
            if (value && idleTimer == null) {
                long periodMs = Math.max(5, Math.min(100, Math.round(1000 / rateHz)));
                idleTimer = loop.scheduleAtFixedRate(this::onIdleTick, periodMs, periodMs, TimeUnit.MILLISECONDS);
            } else if (!value && idleTimer != null) {
                idleTimer.cancel(false);
                idleTimer = null;
            }
        });
    }

    /** Stops timers. */
    public void close() {
        connected = false;
        loop.execute(() -> {
            if (idleTimer != null) {
                idleTimer.cancel(false);
                idleTimer = null;
            }
        });
    }

    /**
     * Hands a packet to the pipeline thread, or sheds it if too many packets or bytes already
     * wait (the newest is shed here; the latency budget then sheds the oldest on the pipeline
     * thread). Any thread.
     */
    public boolean offerPacket(EventPacket packet, long arrivalNanos, Transport transport) {
        boolean tcp = transport == Transport.TCP;
        counters.increment(tcp ? NodeCounter.PACKETS_TCP : NodeCounter.PACKETS_UDP);
        counters.add(tcp ? NodeCounter.EVENTS_TCP : NodeCounter.EVENTS_UDP, packet.getEventCount());
        long bytes = packet.getEvents().size();
        int waitingPackets = pending.incrementAndGet();
        long waitingBytes = pendingBytes.addAndGet(bytes);
        if (waitingPackets > maxPending || waitingBytes > maxPendingBytes) {
            pending.decrementAndGet();
            pendingBytes.addAndGet(-bytes);
            counters.increment(NodeCounter.PACKETS_SHED_QUEUE);
            counters.add(NodeCounter.EVENTS_SHED_QUEUE, packet.getEventCount());
            return false;
        }
        loop.execute(() -> {
            pending.decrementAndGet();
            pendingBytes.addAndGet(-bytes);
            onPacket(packet, arrivalNanos / 1000, transport);
        });
        return true;
    }

    /** Hands one of the sensor's own frames to the pipeline thread. Any thread. */
    public void offerFrame(SensorFrame frame) {
        counters.increment(NodeCounter.SENSOR_FRAMES);
        loop.execute(() -> onSensorFrame(frame));
    }

    private void onPacket(EventPacket packet, long arrivalUs, Transport transport) {
        int count = packet.getEventCount();
        if (transport == Transport.UDP && !acceptUdpSequence(packet.getSequence())) {
            counters.add(NodeCounter.EVENTS_REJECTED, count);
            return;
        }
        java.nio.ByteBuffer bytes = packet.getEvents().asReadOnlyByteBuffer();
        if ((long) count * EventPacketCodec.BYTES_PER_EVENT != bytes.remaining() || count > batch.capacity()) {
            counters.increment(NodeCounter.PACKETS_MALFORMED);
            counters.add(NodeCounter.EVENTS_REJECTED, count);
            droppedSinceFrame += count;
            return;
        }
        if (count == 0) {
            return;
        }
        // Shed before decoding: the lag check uses the last record's time (packets are in time order).
        long newest = packet.getTimeBaseUs() + (bytes.order(java.nio.ByteOrder.LITTLE_ENDIAN)
                .getInt(bytes.position() + (count - 1) * EventPacketCodec.BYTES_PER_EVENT) & 0xFFFFFFFFL);
        if (lastFrameUs != Long.MIN_VALUE && newest < lastFrameUs - RESTART_THRESHOLD_US) {
            restart();
        }
        clockMapper.observe(arrivalUs, newest);
        lastPacketHostUs = arrivalUs;
        long nowUs = clock.monotonicNanos() / 1000;
        // Shed what could not be published within the budget: its age now plus the time processing takes.
        if (nowUs - clockMapper.toHostUs(newest) > budgetUs - Math.min(budgetUs / 2, 2 * workMeanUs)) {
            counters.increment(NodeCounter.PACKETS_SHED_LATENCY);
            counters.add(NodeCounter.EVENTS_SHED_LATENCY, count);
            droppedSinceFrame += count;
            return;
        }
        codec.decode(bytes, count, packet.getTimeBaseUs(), batch, decoded);
        counters.add(NodeCounter.EVENTS_RECEIVED, count);
        int dropped = decoded.outsideSensor + decoded.offsetTooLarge;
        counters.add(NodeCounter.EVENTS_OUTSIDE_SENSOR, dropped);
        droppedSinceFrame += dropped;
        if (batch.size == 0) {
            return;
        }
        if (!scheduleStarted) {
            startSchedule(batch.minTimeUs());
        }
        dropLate();
        newestArrivalUs = arrivalUs;
        applyWithFrames(batch);
        // Once per packet: host arrival of the packet to its events applied (frames read out included).
        long doneNanos = clock.monotonicNanos();
        long lag = doneNanos - arrivalUs * 1000;
        arrivalToApplied.recordNanos(lag);
        lagNanos = lag;
        long workUs = doneNanos / 1000 - nowUs;
        workMeanUs += (workUs - workMeanUs) / 16;
    }

    private boolean acceptUdpSequence(long seq) {
        UdpSequence.Outcome outcome = udpSequence.accept(seq);
        counters.add(NodeCounter.UDP_LOST, udpSequence.takeLost());
        switch (outcome) {
            case DUPLICATE:
                counters.increment(NodeCounter.UDP_DUPLICATE);
                return false;
            case LATE:
                counters.increment(NodeCounter.UDP_LATE);
                return false;
            case REORDERED:
                counters.increment(NodeCounter.UDP_REORDERED);
                return true;
            default:
                return true;
        }
    }

    private void startSchedule(long firstEventUs) {
        scheduleStarted = true;
        frameIndex = (long) Math.ceil(firstEventUs * rateHz / 1e6 - 1e-9);
        nextFrameUs = frameTime(frameIndex, rateHz);
        if (nextFrameUs <= firstEventUs) {
            frameIndex++;
            nextFrameUs = frameTime(frameIndex, rateHz);
        }
        windowStartUs = firstEventUs;
    }

    private void restart() {
        counters.increment(NodeCounter.CLOCK_RESTARTS);
        SensorConfig c = config;
        scheduleStarted = false;
        lastFrameUs = Long.MIN_VALUE;
        clockMapper.reset();
        udpSequence.reset();
        eventsSinceFrame = 0;
        applyConfig(c, Chain.build(c.chainSpec(), width, height));
    }

    /** Drops events older than the last published frame. */
    private void dropLate() {
        if (lastFrameUs == Long.MIN_VALUE || batch.timeBaseUs >= lastFrameUs) {
            return;
        }
        long limit = lastFrameUs - batch.timeBaseUs;
        int kept = 0;
        int n = batch.size;
        for (int i = 0; i < n; i++) {
            if (batch.t[i] >= limit) {
                if (kept != i) {
                    batch.move(i, kept);
                }
                kept++;
            }
        }
        batch.size = kept;
        counters.add(NodeCounter.EVENTS_LATE, n - kept);
        droppedSinceFrame += n - kept;
    }

    /** Applies the batch, publishing every frame whose time falls inside or before it. */
    private void applyWithFrames(EventBatch b) {
        EventBatch current = b;
        while (current.size > 0) {
            long newest = current.timeBaseUs + current.maxT;
            if (newest < nextFrameUs) {
                apply(current);
                break;
            }
            int split = firstAtOrAfter(current, nextFrameUs);
            if (split == current.size) { // maxT is only a bound: no event has reached the frame time yet
                apply(current);
                break;
            }
            EventBatch rest = current == batch ? tail : batch;
            splitInto(current, split, rest);
            apply(current);
            emitDueFrames(rest.timeBaseUs + rest.t[0]);
            current = rest;
        }
    }

    private static int firstAtOrAfter(EventBatch b, long timeUs) {
        long limit = timeUs - b.timeBaseUs;
        for (int i = 0; i < b.size; i++) {
            if (b.t[i] >= limit) {
                return i;
            }
        }
        return b.size;
    }

    /** Moves events [split, size) of {@code from} into {@code to}; {@code from} keeps [0, split). */
    private static void splitInto(EventBatch from, int split, EventBatch to) {
        to.reset(from.timeBaseUs);
        int n = from.size - split;
        System.arraycopy(from.x, split, to.x, 0, n);
        System.arraycopy(from.y, split, to.y, 0, n);
        System.arraycopy(from.t, split, to.t, 0, n);
        System.arraycopy(from.p, split, to.p, 0, n);
        to.size = n;
        to.maxT = from.maxT;
        from.size = split;
    }

    private void apply(EventBatch b) {
        if (b.size == 0) {
            return;
        }
        long newest = b.timeBaseUs + b.maxT;
        live.accumulate(b); // live view: raw activity before denoise, only while someone watches
        chain.process(b, stageTimers);
        eventsSinceFrame += b.size;
        int everyN = config.readoutEveryEvents;
        if (everyN > 0 && eventsSinceFrame >= everyN) {
            readoutAndPublish(Math.min(newest, nextFrameUs - 1), -1);
        }
    }

    /** Publishes every grid frame with time <= {@code upToUs}; stale ones except the newest are skipped. */
    private void emitDueFrames(long upToUs) {
        long nowUs = clock.monotonicNanos() / 1000;
        while (nextFrameUs <= upToUs) {
            long t = nextFrameUs;
            long following = frameTime(frameIndex + 1, rateHz);
            boolean stale = nowUs - clockMapper.toHostUs(t) > budgetUs;
            if (stale && following <= upToUs) {
                counters.increment(NodeCounter.FRAMES_SKIPPED);
            } else {
                readoutAndPublish(t, frameIndex);
            }
            frameIndex++;
            nextFrameUs = following;
        }
    }

    private void onIdleTick() {
        if (!connected || !scheduleStarted || !clockMapper.ready()) {
            return;
        }
        long nowUs = clock.monotonicNanos() / 1000;
        // Sensor time that has surely passed, allowing the budget for packets still in flight.
        long sensorNowUs = nowUs - clockMapper.offsetUs() - budgetUs;
        if (nextFrameUs <= sensorNowUs && nowUs - lastPacketHostUs > budgetUs) {
            emitDueFrames(sensorNowUs);
        }
    }

    private void onSensorFrame(SensorFrame f) {
        if (f.getWidth() != width || f.getHeight() != height) {
            counters.increment(NodeCounter.GEOMETRY_MISMATCH);
            return;
        }
        if (chain.reconstruction() instanceof ComplementaryFilter fusion) {
            long mid = (f.getExposureStartUs() + f.getExposureEndUs()) / 2;
            try {
                fusion.applyFrame(mid, f.getPixels().asReadOnlyByteBuffer(), f.getBitDepth());
                lastSensorFrameUs = mid;
            } catch (IllegalArgumentException e) {
                counters.increment(NodeCounter.PACKETS_MALFORMED);
            }
        }
    }

    private void readoutAndPublish(long frameTimeUs, long gridIndex) {
        if (!publisher.hasSubscribers(id) && !live.watching()) {
            // Nobody to show it to: skip the readout (the reconstruction's state does not depend on it).
            counters.increment(NodeCounter.FRAMES_UNREAD);
            markStageCounts();
            endWindow(frameTimeUs);
            return;
        }
        long r0 = clock.monotonicNanos();
        chain.reconstruction().readLog(frameTimeUs, log);
        long readoutNanos = clock.monotonicNanos() - r0;
        grayReadyFor = -1;
        long seq = ++sequence;
        Provenance.Builder p = Provenance.newBuilder()
                .setEventsApplied(eventsSinceFrame)
                .setEventsDropped(droppedSinceFrame)
                .setLastSensorFrameUs(lastSensorFrameUs);
        List<EventStage> stages = chain.stages();
        for (int i = 0; i < stages.size(); i++) {
            EventStage s = stages.get(i);
            long in = s.counters().eventsIn();
            long out = s.counters().eventsOut();
            p.addStages(StageCount.newBuilder()
                    .setStage(s.name())
                    .setEventsIn(in - stageInAtFrame[i])
                    .setEventsRemoved((in - stageInAtFrame[i]) - (out - stageOutAtFrame[i])));
            stageInAtFrame[i] = in;
            stageOutAtFrame[i] = out;
        }
        FrameData frame = new FrameData(id, seq, gridIndex, frameTimeUs, windowStartUs, width, height, rateHz,
                log, this::gray8, p.build(), clockMapper.toHostUs(frameTimeUs), newestArrivalUs, r0, readoutNanos);
        publisher.publish(frame, counters, readoutToSocket);
        readoutDuration.recordNanos(readoutNanos);
        sensorToPublish.recordNanos(clock.monotonicNanos() - frame.frameHostUs() * 1000);
        live.onFrame(frame); // after the latency record: a live view page does not count as a subscriber
        endWindow(frameTimeUs);
    }

    /** Starts the provenance's per-frame stage counts afresh from the chain's counters. */
    private void markStageCounts() {
        List<EventStage> stages = chain.stages();
        for (int i = 0; i < stages.size(); i++) {
            stageInAtFrame[i] = stages.get(i).counters().eventsIn();
            stageOutAtFrame[i] = stages.get(i).counters().eventsOut();
        }
    }

    private void endWindow(long frameTimeUs) {
        lastFrameUs = frameTimeUs;
        windowStartUs = frameTimeUs;
        eventsSinceFrame = 0;
        droppedSinceFrame = 0;
        newestArrivalUs = 0;
    }

    private byte[] gray8() {
        if (grayReadyFor != (int) sequence) {
            toneMapper.apply(log, log.length, gray);
            grayReadyFor = (int) sequence;
        }
        return gray;
    }

    /** Sensor time of a frame (mapped to host time) to the frame handed to subscribers; recorded per frame. */
    public LatencyRecorder sensorToPublishLatency() {
        return sensorToPublish;
    }

    /** Time spent reading the reconstruction out; recorded per frame. */
    public LatencyRecorder readoutLatency() {
        return readoutDuration;
    }

    /** Start of a frame's readout to its bytes written to a subscriber's socket; recorded per subscriber write. */
    public LatencyRecorder readoutToSocketLatency() {
        return readoutToSocket;
    }

    /** Host arrival of a packet to its events applied by the chain; recorded per packet. */
    public LatencyRecorder arrivalToAppliedLatency() {
        return arrivalToApplied;
    }

    /** Processing lag: arrival-to-applied time of the last packet processed, in nanoseconds. Any thread. */
    public long lagNanos() {
        return lagNanos;
    }

    /** The live view tap: who watches this sensor ({@link LiveTap#watching()}, any thread). */
    public LiveTap live() {
        return live;
    }

    /** Current frame rate. */
    public double frameRateHz() {
        return rateHz;
    }
}
