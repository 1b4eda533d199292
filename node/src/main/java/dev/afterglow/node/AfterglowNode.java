package dev.afterglow.node;

import dev.afterglow.node.config.LimitsConfig;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.fleet.Fleet;
import dev.afterglow.node.guard.ConnectionGuard;
import dev.afterglow.node.guard.ConnectionLimiter;
import dev.afterglow.node.http.MessageMark;
import dev.afterglow.node.http.OriginCheck;
import dev.afterglow.node.ingest.ErrorReplies;
import dev.afterglow.node.pipeline.PipelineWarmup;
import dev.afterglow.node.pipeline.PipelineWatchdog;
import dev.afterglow.node.publish.SubscriberAccess;
import dev.afterglow.node.stats.OnceLog;
import dev.afterglow.node.http.HttpEndpoints;
import dev.afterglow.node.ingest.TcpIngestHandler;
import dev.afterglow.node.ingest.UdpIngestHandler;
import dev.afterglow.node.live.LiveSocketGate;
import dev.afterglow.node.live.LiveSocketHandler;
import dev.afterglow.node.live.LiveViews;
import dev.afterglow.node.pipeline.NodeClock;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.publish.SubscriberHandler;
import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.NodeMeters;
import dev.afterglow.node.tls.NodeTls;
import dev.afterglow.node.tls.TlsListener;
import dev.afterglow.node.wire.BoundedVarintFrameDecoder;
import io.netty.bootstrap.Bootstrap;
import io.netty.bootstrap.ServerBootstrap;
import io.netty.channel.Channel;
import io.netty.channel.ChannelInitializer;
import io.netty.channel.ChannelOption;
import io.netty.channel.FixedRecvByteBufAllocator;
import io.netty.channel.DefaultEventLoopGroup;
import io.netty.channel.EventLoopGroup;
import io.netty.channel.MultiThreadIoEventLoopGroup;
import io.netty.channel.WriteBufferWaterMark;
import io.netty.channel.nio.NioIoHandler;
import io.netty.channel.socket.DatagramChannel;
import io.netty.channel.socket.SocketChannel;
import io.netty.channel.socket.nio.NioDatagramChannel;
import io.netty.channel.socket.nio.NioServerSocketChannel;
import io.netty.handler.codec.http.HttpObjectAggregator;
import io.netty.handler.codec.http.HttpServerCodec;
import io.netty.handler.codec.http.websocketx.WebSocketServerProtocolHandler;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.InetSocketAddress;
import java.util.concurrent.TimeUnit;

/**
 * The running node: TCP and UDP ingest, per-sensor pipelines and the subscriber server, all
 * bound to the configured address (loopback by default). {@link #close()} stops intake first,
 * lets pipelines finish what they hold, then closes subscribers.
 */
public final class AfterglowNode implements AutoCloseable {
    private static final int SUBSCRIBE_MAX_BYTES = 64 << 10;
    /** Largest first message on a sensor connection: a hello is a few hundred bytes. */
    private static final int HELLO_MAX_BYTES = 64 << 10;
    /** Largest UDP payload over IPv4: 65,535 - 20 (IP header) - 8 (UDP header). */
    private static final int MAX_DATAGRAM_BYTES = 65_507;

    private final NodeConfig config;
    private final NodeClock clock;
    /** Sensors' TCP and UDP input: nothing else runs here, so a scrape or a subscriber never delays ingest. */
    private final EventLoopGroup ingestGroup;
    /** Subscribers and HTTP (metrics, settings, live view). */
    private final EventLoopGroup serveGroup;
    private final EventLoopGroup pipelineGroup;
    private final Counters nodeCounters = new Counters();
    private final FramePublisher publisher;
    private final SensorRegistry registry;
    /** Kafka: edge forwarding, processing group, frame topic; null when not configured. */
    private final Fleet fleet;
    private Channel tcpIngest;
    private Channel udpIngest;
    private Channel subscriberServer;
    private Channel httpServer;
    private final PrometheusMeterRegistry meterRegistry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
    private final NodeMeters meters;
    private final LiveViews liveViews;
    /** TLS on the TCP listeners named in {@code tls.listeners} (nothing when TLS is off). */
    private final NodeTls tls;
    private volatile boolean ready;
    private final PipelineWatchdog watch;
    private java.util.concurrent.ScheduledFuture<?> watchdog;

    private AfterglowNode(NodeConfig config, NodeClock clock) {
        this.config = config;
        this.clock = clock;
        this.ingestGroup = new MultiThreadIoEventLoopGroup(1, NioIoHandler.newFactory());
        this.serveGroup = new MultiThreadIoEventLoopGroup(1, NioIoHandler.newFactory());
        this.pipelineGroup = new DefaultEventLoopGroup(config.limits.pipelineThreads);
        this.publisher = new FramePublisher(clock, nodeCounters, config.limits.frameBufferBytes);
        Fleet madeFleet = null;
        try {
            madeFleet = config.kafka.enabled() ? Fleet.create(config.kafka, clock, nodeCounters) : null;
            this.registry = madeFleet == null
                    ? new SensorRegistry(config, pipelineGroup, publisher, clock, nodeCounters)
                    : new SensorRegistry(config, pipelineGroup, publisher, clock, nodeCounters, madeFleet.sinks(),
                            madeFleet.inputs());
        } catch (RuntimeException e) {
            if (madeFleet != null) {
                madeFleet.close();
            }
            // e.g. a learned reconstruction's model refused: no thread of this node may outlive the error
            ingestGroup.shutdownGracefully(0, 1, java.util.concurrent.TimeUnit.SECONDS);
            serveGroup.shutdownGracefully(0, 1, java.util.concurrent.TimeUnit.SECONDS);
            pipelineGroup.shutdownGracefully(0, 1, java.util.concurrent.TimeUnit.SECONDS);
            throw e;
        }
        this.fleet = madeFleet;
        this.meters = new NodeMeters(meterRegistry, registry, publisher, nodeCounters, fleet);
        this.liveViews = new LiveViews(registry, clock);
        this.watch = new PipelineWatchdog(clock, config.limits.watchdogStallMs * 1_000_000L);
        this.tls = NodeTls.of(config.tls, nodeCounters);
    }

    /** Starts a node with the system clock. */
    public static AfterglowNode start(NodeConfig config) throws InterruptedException {
        return start(config, NodeClock.SYSTEM);
    }

    /** Starts a node; listeners are bound when this returns. */
    public static AfterglowNode start(NodeConfig config, NodeClock clock) throws InterruptedException {
        AfterglowNode node = new AfterglowNode(config, clock);
        try {
            node.bind();
        } catch (InterruptedException | RuntimeException e) {
            node.close();
            throw e;
        }
        return node;
    }

    private void bind() throws InterruptedException {
        String address = config.listen.address;
        int maxMessage = config.limits.maxMessageBytes;
        LimitsConfig limits = config.limits;
        if (config.warmUp) {
            PipelineWarmup.run(config); // compile the hot paths before the first sensor's packets count against its budget
        }
        if (config.listen.ingestTcpPort >= 0) {
            ConnectionLimiter limiter = new ConnectionLimiter("ingest", limits.maxConnectionsPerAddress, nodeCounters,
                    ch -> ErrorReplies.sendAndClose(ch, "limit", "too many connections from this address"));
            tcpIngest = new ServerBootstrap()
                    .group(ingestGroup)
                    .channel(NioServerSocketChannel.class)
                    .childOption(ChannelOption.TCP_NODELAY, true)
                    .childHandler(new ChannelInitializer<SocketChannel>() {
                        @Override
                        protected void initChannel(SocketChannel ch) {
                            // The hello is small: an unidentified peer cannot make the node hold a large message.
                            BoundedVarintFrameDecoder decoder = new BoundedVarintFrameDecoder(HELLO_MAX_BYTES, maxMessage,
                                    () -> nodeCounters.increment(NodeCounter.STREAMS_TRUNCATED));
                            ConnectionGuard guard = new ConnectionGuard("ingest", limits.helloTimeoutMs, limits.messageTimeoutMs,
                                    limits.idleTimeoutS * 1000L, 0, nodeCounters, clock::monotonicNanos,
                                    (c, kind, message) -> ErrorReplies.sendAndClose(c, "timeout", message));
                            ch.pipeline().addLast(guard, decoder,
                                    new TcpIngestHandler(registry, clock, () -> guard.messageComplete(decoder.hasPartial())));
                            tls.addTo(ch, TlsListener.INGEST); // in front of the guard: it times decrypted messages
                            ch.pipeline().addFirst(limiter); // in front of everything: refused connections cost no handshake
                        }
                    })
                    .bind(new InetSocketAddress(address, config.listen.ingestTcpPort)).sync().channel();
        }
        if (config.listen.ingestUdpPort >= 0) {
            udpIngest = new Bootstrap()
                    .group(ingestGroup)
                    .channel(NioDatagramChannel.class)
                    .option(ChannelOption.SO_RCVBUF, 8 << 20)
                    // Netty reads datagrams into 2048-byte buffers by default and cuts longer ones short.
                    .option(ChannelOption.RECVBUF_ALLOCATOR, new FixedRecvByteBufAllocator(MAX_DATAGRAM_BYTES))
                    .handler(new ChannelInitializer<DatagramChannel>() {
                        @Override
                        protected void initChannel(DatagramChannel ch) {
                            ch.pipeline().addLast(new UdpIngestHandler(registry, clock));
                        }
                    })
                    .bind(new InetSocketAddress(address, config.listen.ingestUdpPort)).sync().channel();
        }
        if (config.listen.subscriberPort >= 0) {
            int high = config.limits.subscriberHighWaterBytes;
            SubscriberAccess access = new SubscriberAccess(config.access.subscriberTokens);
            ConnectionLimiter limiter = new ConnectionLimiter("subscribers", limits.maxConnectionsPerAddress, nodeCounters,
                    ch -> ErrorReplies.sendAndClose(ch, "limit", "too many connections from this address"));
            subscriberServer = new ServerBootstrap()
                    .group(serveGroup)
                    .channel(NioServerSocketChannel.class)
                    .childOption(ChannelOption.TCP_NODELAY, true)
                    .childOption(ChannelOption.WRITE_BUFFER_WATER_MARK, new WriteBufferWaterMark(high / 2, high))
                    .childHandler(new ChannelInitializer<SocketChannel>() {
                        @Override
                        protected void initChannel(SocketChannel ch) {
                            BoundedVarintFrameDecoder decoder = new BoundedVarintFrameDecoder(SUBSCRIBE_MAX_BYTES, () -> { });
                            // No idle limit: a subscriber only listens. A stalled one (not reading) is dropped.
                            ConnectionGuard guard = new ConnectionGuard("subscribers", limits.helloTimeoutMs, limits.messageTimeoutMs,
                                    0, limits.subscriberStallTimeoutMs, nodeCounters, clock::monotonicNanos,
                                    (c, kind, message) -> ErrorReplies.sendAndClose(c, "timeout", message));
                            ch.pipeline().addLast(guard, decoder,
                                    new SubscriberHandler(registry, publisher, config.limits.maxSubscribers, access,
                                            () -> guard.messageComplete(decoder.hasPartial())));
                            tls.addTo(ch, TlsListener.SUBSCRIBERS);
                            ch.pipeline().addFirst(limiter);
                        }
                    })
                    .bind(new InetSocketAddress(address, config.listen.subscriberPort)).sync().channel();
        }
        if (config.listen.httpPort >= 0) {
            HttpEndpoints endpoints = new HttpEndpoints(meterRegistry, meters, registry, publisher, config.control,
                    this::readiness);
            LiveSocketGate liveGate = new LiveSocketGate(liveViews);
            OriginCheck origins = new OriginCheck(config.access.allowedOrigins, nodeCounters);
            ConnectionLimiter limiter = new ConnectionLimiter("http", limits.maxConnectionsPerAddress, nodeCounters,
                    ch -> HttpEndpoints.refuseAndClose(ch, "too many connections from this address"));
            httpServer = new ServerBootstrap()
                    .group(serveGroup)
                    .channel(NioServerSocketChannel.class)
                    // Live view pages that fall behind skip frames instead of queueing them.
                    .childOption(ChannelOption.WRITE_BUFFER_WATER_MARK,
                            new WriteBufferWaterMark(LiveViews.LOW_WATER_BYTES, LiveViews.HIGH_WATER_BYTES))
                    .childHandler(new ChannelInitializer<SocketChannel>() {
                        @Override
                        protected void initChannel(SocketChannel ch) {
                            ConnectionGuard guard = new ConnectionGuard("http", limits.httpRequestTimeoutMs,
                                    limits.httpRequestTimeoutMs, limits.idleTimeoutS * 1000L, 0, nodeCounters,
                                    clock::monotonicNanos, null);
                            ch.pipeline().addLast(guard, new HttpServerCodec(), new HttpObjectAggregator(64 << 10),
                                    new MessageMark(guard), origins, liveGate,
                                    new WebSocketServerProtocolHandler(LiveSocketGate.protocolConfig()),
                                    new LiveSocketHandler(liveViews), endpoints);
                            tls.addTo(ch, TlsListener.HTTP);
                            ch.pipeline().addFirst(limiter);
                        }
                    })
                    .bind(new InetSocketAddress(address, config.listen.httpPort)).sync().channel();
        }
        if (fleet != null) {
            fleet.start(registry);
        }
        watchdog = serveGroup.next().scheduleAtFixedRate(this::housekeeping, 250, 250, TimeUnit.MILLISECONDS);
        ready = true;
    }

    /** Watchdog and idle-sensor eviction, off the pipeline and ingest threads. */
    private void housekeeping() {
        try {
            watch.check(registry.all());
            registry.evictIdle(clock.monotonicNanos());
        } catch (RuntimeException e) {
            nodeCounters.increment(NodeCounter.INTERNAL_ERRORS);
            OnceLog.warn("housekeeping:" + e.getClass().getName(), "housekeeping: " + e, e);
        }
    }

    /** Null when ready; otherwise why not (starting, or the pipelines that stalled). */
    String readiness() {
        if (!ready) {
            return "starting";
        }
        String stalled = watch.stalled();
        return stalled.isEmpty() ? null : "stalled: " + stalled;
    }

    /** Bound TCP ingest port, or -1. */
    public int ingestTcpPort() {
        return port(tcpIngest);
    }

    /** Bound UDP ingest port, or -1. */
    public int ingestUdpPort() {
        return port(udpIngest);
    }

    /** Bound subscriber port, or -1. */
    public int subscriberPort() {
        return port(subscriberServer);
    }

    /** Bound HTTP port, or -1. */
    public int httpPort() {
        return port(httpServer);
    }

    /** True once every configured listener is bound. */
    public boolean ready() {
        return ready;
    }

    /** The node's meters in Prometheus form (what {@code GET /metrics} serves). */
    public PrometheusMeterRegistry meterRegistry() {
        meters.refresh();
        return meterRegistry;
    }

    private static int port(Channel c) {
        return c == null ? -1 : ((InetSocketAddress) c.localAddress()).getPort();
    }

    /** The sensors. */
    public SensorRegistry sensors() {
        return registry;
    }

    /** Live view pages and who watches which sensor. */
    public LiveViews liveViews() {
        return liveViews;
    }

    /** Subscriber fan-out. */
    public FramePublisher publisher() {
        return publisher;
    }

    /** The node's part in a fleet, or null without Kafka. */
    public Fleet fleet() {
        return fleet;
    }

    /** Node-wide counters. */
    public Counters counters() {
        return nodeCounters;
    }

    /** The configuration in effect. */
    public NodeConfig config() {
        return config;
    }

    @Override
    public void close() {
        // Stop intake first, then let pipelines drain their queues, then close subscriber connections.
        ready = false;
        if (watchdog != null) {
            watchdog.cancel(false);
        }
        closeQuietly(httpServer);
        closeQuietly(tcpIngest);
        closeQuietly(udpIngest);
        if (fleet != null) {
            fleet.stopIntake(); // hands its sensors over cleanly: the group moves them at once
        }
        registry.close();
        pipelineGroup.shutdownGracefully(0, 2, TimeUnit.SECONDS).awaitUninterruptibly(5, TimeUnit.SECONDS);
        if (fleet != null) {
            fleet.close(); // after the pipelines: their last frames go out
        }
        closeQuietly(subscriberServer);
        ingestGroup.shutdownGracefully(0, 2, TimeUnit.SECONDS).awaitUninterruptibly(5, TimeUnit.SECONDS);
        serveGroup.shutdownGracefully(0, 2, TimeUnit.SECONDS).awaitUninterruptibly(5, TimeUnit.SECONDS);
    }

    private static void closeQuietly(Channel c) {
        if (c != null) {
            c.close().awaitUninterruptibly(2, TimeUnit.SECONDS);
        }
    }
}
