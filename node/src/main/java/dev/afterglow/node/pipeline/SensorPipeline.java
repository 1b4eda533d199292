package dev.afterglow.node.pipeline;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.filters.recon.FrameFusion;
import dev.afterglow.filters.recon.InferringReconstruction;
import dev.afterglow.node.recording.SensorRecorder;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.metrics.LatencyRecorder;
import dev.afterglow.metrics.StageTimers;
import dev.afterglow.node.config.SensorConfig;
import dev.afterglow.node.config.ToneMapText;
import dev.afterglow.node.live.LiveTap;
import dev.afterglow.node.publish.FrameSink;
import dev.afterglow.node.publish.FrameData;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
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
 * <p>Every number from the wire is checked before any arithmetic: counts and time bases are read
 * as unsigned and range-checked on the I/O thread (a bad packet is rejected whole, counted as
 * malformed). Time rules ({@link SensorTimeline}): a packet whose newest event is too far ahead of
 * the sensor's timeline, or far behind its last frame, is rejected (counted) unless a run of
 * consistent packets shows the sensor's clock really jumped, in which case its state is rebuilt
 * (counted as a clock restart). Events older than the last published frame are dropped as late.
 *
 * <p>Isolation: every task on the pipeline thread runs guarded; an unexpected error resets this
 * sensor's state (counted, logged once) and the thread carries on with the next task, for this
 * and every other sensor. {@link #stalledForNanos} lets a watchdog see a pipeline that has work
 * and makes no progress.
 */
public final class SensorPipeline implements SensorInput {
    /** A jump back by more than this many microseconds of sensor time is off the sensor's timeline. */
    public static final long RESTART_THRESHOLD_US = SensorTimeline.RESTART_THRESHOLD_US;
    /** Largest accepted sensor time (time base, frame exposure), about 142 years of microseconds. */
    public static final long MAX_SENSOR_TIME_US = 1L << 52;
    /** Batches start this small and grow (rarely, by doubling) up to the packet limit. */
    private static final int INITIAL_BATCH_EVENTS = 1 << 14;

    private final String id;
    private final int width;
    private final int height;
    private final EventLoop loop;
    private final NodeClock clock;
    private final Counters counters;
    private final int maxPending;
    private final long maxPendingBytes;
    private final AtomicInteger pending = new AtomicInteger();
    private final java.util.concurrent.atomic.AtomicLong pendingBytes = new java.util.concurrent.atomic.AtomicLong();
    private final EventPacketCodec codec;
    private final int maxEventsPerPacket;
    private EventBatch batch;
    private EventBatch tail;
    private final DecodeResult decoded = new DecodeResult();
    private final ClockMapper clockMapper = new ClockMapper();
    private final SensorTimeline timeline;
    private final UdpSequence udpSequence = new UdpSequence();
    /** Host monotonic time (ns) the running task started; 0 while idle. Written by the pipeline thread. */
    private volatile long taskStartNanos;
    /**
     * Records whether the sensor sends its own frames (its hello says so, or a frame came). A sensor
     * on the automatic chain gets the default chain for that, built afresh; any other chain is kept.
     * Any thread.
     */
    public void declareFrames(boolean sendsFrames) {
        execute(() -> switchAutomaticChain(sendsFrames));
    }

    private void switchAutomaticChain(boolean sendsFrames) {
        SensorConfig c = config;
        if (c.sendsFrames() == sendsFrames) {
            return;
        }
        SensorConfig next = c.withSendsFrames(sendsFrames);
        applyConfig(next, c.automaticChain() ? Chain.build(next.chainSpec(), width, height) : chain);
    }

    /** Host monotonic time (ns) a packet or frame was last offered (for idle eviction). */
    private volatile long lastInputNanos;
    /** Host monotonic time (ns) the last task finished. */
    private volatile long lastProgressNanos;
    private final float[] log;
    private final byte[] gray;
    private final LatencyRecorder sensorToPublish = new LatencyRecorder();
    private final LatencyRecorder readoutDuration = new LatencyRecorder();
    private final LatencyRecorder arrivalToApplied = new LatencyRecorder();
    private final LatencyRecorder readoutToSocket = LatencyRecorder.forConcurrentWriters();
    private final LatencyRecorder inferenceDuration = new LatencyRecorder();
    private volatile long lagNanos;
    private final LiveTap live;
    /** Where frames go: the subscribers, then the live view, then any others (a frame topic). */
    private final List<FrameSink> sinks;

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
    /** Mean time of a readout (moving average over ~8 frames); a learned reconstruction's inferences make it large. */
    private long readoutMeanNanos;
    /** Records what the sensor sends, on its own thread; null when it records nothing. Swapped on the pipeline thread. */
    private volatile SensorRecorder recorder;
    /** Model inferences already added to the counters. */
    private long inferencesCounted;
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
    /** Newest event time of any packet accepted on the current timeline; Long.MIN_VALUE before the first. */
    private long newestAcceptedUs = Long.MIN_VALUE;
    /** Host arrival (us) of the packet that brought {@link #newestAcceptedUs}. */
    private long newestAcceptedArrivalUs;

    /**
     * @param config validated sensor settings (geometry, chain, rate, budget)
     * @param loop the pipeline thread this sensor lives on
     */
    public SensorPipeline(SensorConfig config, EventLoop loop, FramePublisher publisher, NodeClock clock,
            Counters counters, int maxPendingPackets, long maxPendingBytes, int maxEventsPerPacket, long maxTimeAheadUs) {
        this(config, loop, publisher, clock, counters, maxPendingPackets, maxPendingBytes, maxEventsPerPacket, maxTimeAheadUs,
                List.of());
    }

    /**
     * @param extraSinks where frames go besides the subscribers and the live view (a frame topic)
     */
    public SensorPipeline(SensorConfig config, EventLoop loop, FramePublisher publisher, NodeClock clock,
            Counters counters, int maxPendingPackets, long maxPendingBytes, int maxEventsPerPacket, long maxTimeAheadUs,
            List<FrameSink> extraSinks) {

        this.id = config.id;
        this.width = config.width;
        this.height = config.height;
        this.loop = loop;
        this.clock = clock;
        this.counters = counters;
        this.maxPending = maxPendingPackets;
        this.maxPendingBytes = maxPendingBytes;
        this.codec = new EventPacketCodec(width, height);
        this.maxEventsPerPacket = maxEventsPerPacket;
        int initial = Math.min(maxEventsPerPacket, INITIAL_BATCH_EVENTS);
        this.batch = new EventBatch(initial);
        this.tail = new EventBatch(initial);
        this.timeline = new SensorTimeline(clockMapper, maxTimeAheadUs);
        this.lastProgressNanos = clock.monotonicNanos();
        this.lastInputNanos = lastProgressNanos;
        this.log = new float[width * height];
        this.gray = new byte[width * height];
        this.live = new LiveTap(width, height, clock, counters);
        // The subscribers first: a frame's publish age is theirs, and a live view page does not count as one.
        List<FrameSink> all = new java.util.ArrayList<>();
        all.add(publisher.sinkFor(id, counters, readoutToSocket, sensorToPublish, clock::monotonicNanos));
        all.add(live);
        all.addAll(extraSinks);
        this.sinks = List.copyOf(all);
        applyConfig(config, Chain.build(config.chainSpec(), width, height));
    }

    private void applyConfig(SensorConfig c, Chain built) {
        this.config = c;
        boolean recording = c.record != null && c.record.enabled;
        if (recording != (recorder != null)) {
            switchRecording(recording);
        }
        if (built != chain) {
            Chain old = chain;
            this.chain = built;
            if (old != null) {
                old.close(); // a learned reconstruction's native session goes with it
            }
            this.stageTimers = new StageTimers(built);
            this.stageInAtFrame = new long[built.stages().size()];
            this.stageOutAtFrame = new long[built.stages().size()];
            this.inferencesCounted = 0;
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
        return FrameGrid.frameTime(k, rateHz);
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
        execute(() -> {
            try {
                boolean same = next.chainSpec().equals(chain.spec());
                applyConfig(next, same ? chain : fresh);
                if (same) {
                    fresh.close();
                }
                applied.complete(null);
            } catch (RuntimeException e) {
                applied.completeExceptionally(e);
                throw e;
            }
        });
        return applied;
    }


    /** Host monotonic time (ns) a packet or frame was last offered, or the pipeline was made. Any thread. */
    public long lastInputNanos() {
        return lastInputNanos;
    }

    /** True while a TCP connection of the sensor is attached. Any thread. */
    public boolean connected() {
        return connected;
    }

    /** Marks the sensor connected (idle frames are published while connected) or not. Any thread. */
    public void setConnected(boolean value) {
        connected = value;
        execute(() -> {
            if (value) {
                timeline.open(); // a new connection of the sensor may start a new timeline at once
            }
            if (value && idleTimer == null) {
                long periodMs = Math.max(5, Math.min(100, Math.round(1000 / rateHz)));
                idleTimer = loop.scheduleAtFixedRate(() -> guarded(this::onIdleTick), periodMs, periodMs, TimeUnit.MILLISECONDS);
            } else if (!value && idleTimer != null) {
                idleTimer.cancel(false);
                idleTimer = null;
            }
        });
    }

    /** Stops timers and releases the chain (on the pipeline thread, after the tasks already queued). */
    public void close() {
        connected = false;
        SensorRecorder r = recorder;
        if (r != null) {
            r.close();
        }
        try {
            loop.execute(() -> {
                if (idleTimer != null) {
                    idleTimer.cancel(false);
                    idleTimer = null;
                }
                chain.close();
            });
        } catch (java.util.concurrent.RejectedExecutionException e) {
            chain.close(); // the thread has stopped: nothing else uses the chain
        }
    }

    @Override
    public void hello(SensorHello hello, long arrivalNanos) {
        SensorRecorder r = recorder;
        if (r != null) {
            r.start(hello, arrivalNanos);
        }
    }

    @Override
    public boolean events(Envelope envelope, long arrivalNanos, Transport transport) {
        record(arrivalNanos, envelope);
        return offerPacket(envelope.getEvents(), arrivalNanos, transport);
    }

    @Override
    public void sensorFrame(Envelope envelope, long arrivalNanos) {
        record(arrivalNanos, envelope);
        offerFrame(envelope.getSensorFrame());
    }

    /**
     * Records a message the sensor sent, if this sensor records (off the pipeline thread: it never
     * waits on the disk). A UDP sensor's first message starts its recording with a hello made from
     * the configuration.
     */
    private void record(long arrivalNanos, Envelope envelope) {
        SensorRecorder r = recorder;
        if (r == null) {
            return;
        }
        if (!r.started()) {
            r.start(configHello(), arrivalNanos);
        }
        r.offer(arrivalNanos, envelope);
    }

    /**
     * The hello made from the configuration: what a recording or the event topic starts with when
     * the sensor sent none (UDP, or recording switched on while connected).
     */
    public SensorHello configHello() {
        return SensorHello.newBuilder().setSensorId(id).setWidth(width).setHeight(height)
                .setSendsFrames(config.sendsFrames()).build();
    }

    /** Starts a new recording (with a hello made from the configuration) or stops the current one. */
    private void switchRecording(boolean on) {
        SensorRecorder old = recorder;
        if (on) {
            SensorRecorder r = new SensorRecorder(id, config.record, counters);
            if (connected) { // switched on at run time: start now; otherwise at the sensor's hello
                r.start(configHello(), clock.monotonicNanos());
            }
            recorder = r;
        } else {
            recorder = null;
            if (old != null) {
                old.stopSoon();
            }
        }
    }

    /** The sensor's recorder, or null when it records nothing. */
    public SensorRecorder recorder() {
        return recorder;
    }

    /**
     * Hands a packet to the pipeline thread, or sheds it if too many packets or bytes already
     * wait (the newest is shed here; the latency budget then sheds the oldest on the pipeline
     * thread). Any thread.
     */
    public boolean offerPacket(EventPacket packet, long arrivalNanos, Transport transport) {
        lastInputNanos = clock.monotonicNanos();
        long bytes = packet.getEvents().size();
        // Unsigned on the wire: a count of 2^31 or more must not turn negative here.
        long declared = Integer.toUnsignedLong(packet.getEventCount());
        long present = bytes / EventPacketCodec.BYTES_PER_EVENT;
        switch (transport) {
            case TCP -> {
                counters.increment(NodeCounter.PACKETS_TCP);
                counters.add(NodeCounter.EVENTS_TCP, present);
            }
            case UDP -> {
                counters.increment(NodeCounter.PACKETS_UDP);
                counters.add(NodeCounter.EVENTS_UDP, present);
            }
            case KAFKA -> {
                counters.increment(NodeCounter.PACKETS_KAFKA);
                counters.add(NodeCounter.EVENTS_KAFKA, present);
            }
        }
        if (declared * EventPacketCodec.BYTES_PER_EVENT != bytes || declared > maxEventsPerPacket
                || Long.compareUnsigned(packet.getTimeBaseUs(), MAX_SENSOR_TIME_US) > 0) {
            counters.increment(NodeCounter.PACKETS_MALFORMED);
            counters.add(NodeCounter.EVENTS_REJECTED, present);
            return false;
        }
        int waitingPackets = pending.incrementAndGet();
        long waitingBytes = pendingBytes.addAndGet(bytes);
        if (waitingPackets > maxPending || waitingBytes > maxPendingBytes) {
            pending.decrementAndGet();
            pendingBytes.addAndGet(-bytes);
            counters.increment(NodeCounter.PACKETS_SHED_QUEUE);
            counters.add(NodeCounter.EVENTS_SHED_QUEUE, present);
            return false;
        }
        execute(() -> {
            pending.decrementAndGet();
            pendingBytes.addAndGet(-bytes);
            onPacket(packet, arrivalNanos / 1000, transport);
        });
        return true;
    }

    /** True while half the pending-packet queue (by count or bytes) is taken. Any thread. */
    public boolean backlogged() {
        return pending.get() >= maxPending / 2 || pendingBytes.get() >= maxPendingBytes / 2;
    }

    /**
     * Runs {@code task} on the pipeline thread once every packet queued before it has been handled
     * (tasks run in order): how a paused connection learns that the queue has drained. Any thread.
     */
    public void afterQueued(Runnable task) {
        execute(task);
    }

    /** Hands one of the sensor's own frames to the pipeline thread. Any thread. */
    public void offerFrame(SensorFrame frame) {
        lastInputNanos = clock.monotonicNanos();
        counters.increment(NodeCounter.SENSOR_FRAMES);
        execute(() -> onSensorFrame(frame));
    }

    /** Runs {@code task} on the pipeline thread, guarded ({@link #guarded}). */
    void execute(Runnable task) {
        try {
            loop.execute(() -> guarded(task));
        } catch (java.util.concurrent.RejectedExecutionException e) {
            // the node is shutting down: the pipeline thread takes no more work
        }
    }

    /**
     * Runs one pipeline task; an unexpected error costs this sensor its state, nothing more: it is
     * counted, logged once, the sensor starts afresh, and the thread goes on with its next task.
     */
    private void guarded(Runnable task) {
        taskStartNanos = clock.monotonicNanos();
        try {
            task.run();
        } catch (RuntimeException | StackOverflowError | OutOfMemoryError e) {
            counters.increment(NodeCounter.PIPELINE_FAILURES);
            OnceLog.warn("pipeline:" + id + ":" + e.getClass().getName(),
                    "sensor " + id + ": " + e + " while processing; its state was reset", e);
            try {
                resetState();
            } catch (RuntimeException | OutOfMemoryError again) {
                OnceLog.warn("pipeline-reset:" + id, "sensor " + id + ": reset failed: " + again, again);
            }
        } finally {
            lastProgressNanos = clock.monotonicNanos();
            taskStartNanos = 0;
        }
    }

    /**
     * How long this pipeline has had work without finishing any (a task running, or packets
     * waiting), in nanoseconds at host time {@code nowNanos}; 0 if it is idle or progressing. Any thread.
     */
    public long stalledForNanos(long nowNanos) {
        long start = taskStartNanos;
        if (start != 0) {
            return nowNanos - start;
        }
        return pending.get() > 0 ? Math.max(0, nowNanos - lastProgressNanos) : 0;
    }

    private void onPacket(EventPacket packet, long arrivalUs, Transport transport) {
        int count = packet.getEventCount(); // checked on the I/O thread: 0 .. maxEventsPerPacket
        if (transport == Transport.UDP && !acceptUdpSequence(packet.getSequence())) {
            counters.add(NodeCounter.EVENTS_REJECTED, count);
            return;
        }
        if (count == 0) {
            return;
        }
        java.nio.ByteBuffer bytes = packet.getEvents().asReadOnlyByteBuffer();
        // Shed before decoding: the lag check uses the last record's time (packets are in time order).
        long newest = packet.getTimeBaseUs() + (bytes.order(java.nio.ByteOrder.LITTLE_ENDIAN)
                .getInt(bytes.position() + (count - 1) * EventPacketCodec.BYTES_PER_EVENT) & 0xFFFFFFFFL);
        switch (timeline.check(arrivalUs, newest, newestAcceptedUs, newestAcceptedArrivalUs)) {
            case FUTURE -> {
                rejectOffTimeline(NodeCounter.PACKETS_FUTURE, count);
                return;
            }
            case PAST -> {
                rejectOffTimeline(NodeCounter.PACKETS_PAST, count);
                return;
            }
            case REANCHOR -> {
                counters.increment(NodeCounter.CLOCK_REANCHORS);
                clockMapper.reset();
            }
            case RESYNC -> restart();
            case ON -> { }
        }
        clockMapper.observe(arrivalUs, newest);
        if (newest >= newestAcceptedUs) {
            newestAcceptedUs = newest;
            newestAcceptedArrivalUs = arrivalUs;
        }
        lastPacketHostUs = arrivalUs;
        long nowUs = clock.monotonicNanos() / 1000;
        // Shed what could not be published within the budget: its age now plus the time processing takes.
        // The headroom also holds one readout (up to a quarter of the budget), so the frame a packet brings is
        // still published within the budget when a readout is costly (a model inference).
        long headroomUs = Math.min(budgetUs / 2, 2 * workMeanUs) + Math.min(budgetUs / 4, readoutMeanNanos / 1000);
        if (nowUs - clockMapper.toHostUs(newest) > budgetUs - headroomUs) {
            counters.increment(NodeCounter.PACKETS_SHED_LATENCY);
            counters.add(NodeCounter.EVENTS_SHED_LATENCY, count);
            droppedSinceFrame += count;
            return;
        }
        ensureBatchCapacity(count);
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

    private void rejectOffTimeline(NodeCounter counter, int count) {
        counters.increment(counter);
        counters.add(NodeCounter.EVENTS_REJECTED, count);
        droppedSinceFrame += count;
    }

    /** Grows the two work batches (by doubling, up to the packet limit) when a packet needs more room. */
    private void ensureBatchCapacity(int count) {
        if (count <= batch.capacity()) {
            return;
        }
        int capacity = batch.capacity();
        while (capacity < count) {
            capacity = (int) Math.min(maxEventsPerPacket, capacity * 2L);
        }
        batch = new EventBatch(capacity);
        tail = new EventBatch(capacity);
    }

    private boolean acceptUdpSequence(long seq) {
        UdpSequence.Outcome outcome = udpSequence.accept(seq);
        counters.add(NodeCounter.UDP_LOST, udpSequence.takeLost());
        counters.add(NodeCounter.UDP_RESYNCS, udpSequence.takeResyncs());
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
        frameIndex = FrameGrid.firstIndexAfter(firstEventUs, rateHz);
        nextFrameUs = frameTime(frameIndex, rateHz);
        windowStartUs = firstEventUs;
    }

    /** The sensor's clock jumped: start afresh (counted). */
    private void restart() {
        counters.increment(NodeCounter.CLOCK_RESTARTS);
        resetState();
    }

    /** Forgets the schedule, the clock mapping and the reconstruction: the sensor starts afresh. */
    private void resetState() {
        SensorConfig c = config;
        scheduleStarted = false;
        lastFrameUs = Long.MIN_VALUE;
        newestAcceptedUs = Long.MIN_VALUE;
        clockMapper.reset();
        timeline.reset();
        udpSequence.reset();
        eventsSinceFrame = 0;
        droppedSinceFrame = 0;
        applyConfig(c, Chain.build(c.chainSpec(), width, height));
    }

    /** Drops events older than the last published frame. */
    private void dropLate() {
        if (lastFrameUs == Long.MIN_VALUE) {
            return;
        }
        int dropped = BatchSplit.dropBefore(batch, lastFrameUs);
        counters.add(NodeCounter.EVENTS_LATE, dropped);
        droppedSinceFrame += dropped;
    }

    /** Applies the batch, publishing every frame whose time falls inside or before it. */
    private void applyWithFrames(EventBatch b) {
        long packetNewestUs = b.timeBaseUs + b.maxT;
        EventBatch current = b;
        while (current.size > 0) {
            long newest = current.timeBaseUs + current.maxT;
            if (newest < nextFrameUs) {
                apply(current);
                break;
            }
            int split = BatchSplit.firstAtOrAfter(current, nextFrameUs);
            if (split == current.size) { // maxT is only a bound: no event has reached the frame time yet
                apply(current);
                break;
            }
            EventBatch rest = current == batch ? tail : batch;
            BatchSplit.splitInto(current, split, rest);
            apply(current);
            emitDueFrames(rest.timeBaseUs + rest.t[0], packetNewestUs);
            current = rest;
        }
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

    /**
     * Publishes every grid frame with time <= {@code upToUs}; stale ones except the newest are
     * skipped. Stale frames are skipped by arithmetic, not one by one, so a long gap costs no more
     * than a short one: the loop only ever visits frames that are still within the budget.
     *
     * <p>{@code horizonUs} is the newest time the work at hand reaches (the packet's newest event).
     * An earlier frame than the last one at or before it is skipped (counted) if reading it out
     * would make it older than the budget when published, or if reading it and every frame after it
     * would leave less than one readout of margin for that last frame (so under overload the newest
     * frames are kept, not the oldest that are still in time). The last frame is read out unless it would leave older than the
     * budget while another packet already waits (that packet brings a fresher newest frame). With
     * cheap readouts this skips nothing that is fresh; with costly ones (a model inference at every
     * frame) it keeps the frames that are published within the budget.
     */
    private void emitDueFrames(long upToUs, long horizonUs) {
        if (nextFrameUs > upToUs) {
            return;
        }
        long lastDue = indexAtOrBefore(upToUs, rateHz);
        // Frames before this sensor time are older than the budget now (stale).
        long freshFromUs = clock.monotonicNanos() / 1000 - budgetUs - clockMapper.offsetUs();
        long firstFresh = clockMapper.ready() ? indexAtOrBefore(freshFromUs - 1, rateHz) + 1 : frameIndex;
        long start = Math.min(Math.max(frameIndex, firstFresh), lastDue);
        if (start > frameIndex) {
            counters.add(NodeCounter.FRAMES_SKIPPED, start - frameIndex);
            chain.reconstruction().readoutSkipped(frameTime(start - 1, rateHz)); // a model sheds those windows too
            frameIndex = start;
            nextFrameUs = frameTime(frameIndex, rateHz);
        }
        long lastOfHorizon = Math.max(lastDue, indexAtOrBefore(horizonUs, rateHz));
        long lastOfHorizonUs = frameTime(lastOfHorizon, rateHz);
        while (frameIndex <= lastDue) {
            // Reading this frame and every later one up to the last would age the last by one readout each,
            // plus one readout of margin.
            int readoutsToLast = (int) Math.min(1_000_000, lastOfHorizon - frameIndex + 2);
            boolean skip = frameIndex < lastOfHorizon
                    ? agesPastBudget(nextFrameUs, 1) || agesPastBudget(lastOfHorizonUs, readoutsToLast)
                    : pending.get() > 0 && agesPastBudget(nextFrameUs, 1); // a fresher newest frame is queued
            if (skip) {
                counters.increment(NodeCounter.FRAMES_SKIPPED);
                chain.reconstruction().readoutSkipped(nextFrameUs);
            } else {
                readoutAndPublish(nextFrameUs, frameIndex);
            }
            frameIndex++;
            nextFrameUs = frameTime(frameIndex, rateHz);
        }
    }

    /**
     * True if the frame at sensor time {@code frameUs} would be older than the budget once
     * {@code readouts} more readouts (of the mean readout time) are done from now.
     */
    private boolean agesPastBudget(long frameUs, int readouts) {
        if (!clockMapper.ready()) {
            return false;
        }
        long publishUs = clock.monotonicNanos() / 1000 + readouts * (readoutMeanNanos / 1000L);
        return publishUs - clockMapper.toHostUs(frameUs) > budgetUs;
    }

    private static long indexAtOrBefore(long timeUs, double rateHz) {
        return FrameGrid.indexAtOrBefore(timeUs, rateHz);
    }

    private void onIdleTick() {
        if (!connected || !scheduleStarted || !clockMapper.ready()) {
            return;
        }
        long nowUs = clock.monotonicNanos() / 1000;
        // Sensor time that has surely passed, allowing the budget for packets still in flight.
        long sensorNowUs = nowUs - clockMapper.offsetUs() - budgetUs;
        if (nextFrameUs <= sensorNowUs && nowUs - lastPacketHostUs > budgetUs) {
            emitDueFrames(sensorNowUs, sensorNowUs);
        }
    }

    private void onSensorFrame(SensorFrame f) {
        if (f.getWidth() != width || f.getHeight() != height) { // unsigned on the wire: a huge value reads negative, still unequal
            counters.increment(NodeCounter.GEOMETRY_MISMATCH);
            counters.increment(NodeCounter.SENSOR_FRAMES_REJECTED);
            return;
        }
        long start = f.getExposureStartUs();
        long end = f.getExposureEndUs();
        boolean timesInRange = start >= 0 && end >= start && end <= MAX_SENSOR_TIME_US;
        long mid = start + (end - start) / 2;
        if (!timesInRange || timeline.leadUs(clock.monotonicNanos() / 1000, mid) > timeline.maxAheadUs()
                || (lastFrameUs != Long.MIN_VALUE && mid < lastFrameUs - RESTART_THRESHOLD_US)) {
            counters.increment(NodeCounter.SENSOR_FRAMES_REJECTED);
            return;
        }
        if (!config.sendsFrames()) {
            switchAutomaticChain(true); // the hello did not say so, but frames come
        }
        if (chain.reconstruction() instanceof FrameFusion fusion) {
            try {
                fusion.applyFrame(start, end, f.getPixels().asReadOnlyByteBuffer(), f.getBitDepth());
                lastSensorFrameUs = mid;
            } catch (IllegalArgumentException e) {
                counters.increment(NodeCounter.SENSOR_FRAMES_REJECTED);
            }
        }
    }

    private boolean wanted(long gridIndex) {
        for (int i = 0; i < sinks.size(); i++) {
            if (sinks.get(i).wantsFrame(gridIndex, rateHz)) {
                return true;
            }
        }
        return false;
    }

    private void readoutAndPublish(long frameTimeUs, long gridIndex) {
        if (!wanted(gridIndex)) {
            // Nobody to show it to: skip the readout (the reconstruction's state does not depend on it).
            counters.increment(NodeCounter.FRAMES_UNREAD);
            chain.reconstruction().readoutSkipped(frameTimeUs);
            markStageCounts();
            endWindow(frameTimeUs);
            return;
        }
        long r0 = clock.monotonicNanos();
        chain.reconstruction().readLog(frameTimeUs, log);
        long readoutNanos = clock.monotonicNanos() - r0;
        readoutMeanNanos += (readoutNanos - readoutMeanNanos) / 8;
        InferringReconstruction model = chain.reconstruction() instanceof InferringReconstruction m ? m : null;
        long inferenceNanos = model == null ? 0 : model.lastInferenceNanos();
        if (model != null) {
            long runs = model.inferences() - inferencesCounted;
            inferencesCounted += runs;
            if (runs > 0) {
                counters.add(NodeCounter.INFERENCES, runs);
                inferenceDuration.recordNanos(inferenceNanos / runs); // the mean of this frame's inferences
            } else {
                counters.increment(NodeCounter.INFERENCE_REPEATS);
            }
        }
        if (gridIndex >= 0 && pending.get() > 0 && clockMapper.ready()
                && clock.monotonicNanos() / 1000 - clockMapper.toHostUs(frameTimeUs) > budgetUs) {
            // The readout itself (a stalled model inference) made this frame older than the budget, and a
            // newer packet already waits with a fresher frame: drop this one instead of publishing it late.
            counters.increment(NodeCounter.FRAMES_SKIPPED);
            return;
        }
        grayReadyFor = -1;
        long seq = ++sequence;
        Provenance.Builder p = Provenance.newBuilder()
                .setEventsApplied(eventsSinceFrame)
                .setEventsDropped(droppedSinceFrame)
                .setLastSensorFrameUs(lastSensorFrameUs);
        if (model != null) {
            p.setModel(model.modelIdentity()).setInferenceNs(inferenceNanos);
        }
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
        readoutDuration.recordNanos(readoutNanos);
        for (int i = 0; i < sinks.size(); i++) {
            sinks.get(i).accept(frame);
        }
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

    /** A learned reconstruction's model inference; recorded per inference (nothing for other chains). */
    public LatencyRecorder inferenceLatency() {
        return inferenceDuration;
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
