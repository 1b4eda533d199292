package dev.afterglow.node.http;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.afterglow.node.config.ControlConfig;
import dev.afterglow.node.live.LivePages;
import dev.afterglow.node.pipeline.SensorPipeline;
import dev.afterglow.node.pipeline.SensorRegistry;
import dev.afterglow.node.publish.FramePublisher;
import dev.afterglow.node.publish.Subscription;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.NodeMeters;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import io.netty.buffer.Unpooled;
import io.netty.channel.ChannelFutureListener;
import io.netty.channel.ChannelHandler;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.SimpleChannelInboundHandler;
import io.netty.handler.codec.http.DefaultFullHttpResponse;
import io.netty.handler.codec.http.FullHttpRequest;
import io.netty.handler.codec.http.FullHttpResponse;
import io.netty.handler.codec.http.HttpHeaderNames;
import io.netty.handler.codec.http.HttpMethod;
import io.netty.handler.codec.http.HttpResponseStatus;
import io.netty.handler.codec.http.HttpUtil;
import io.netty.handler.codec.http.HttpVersion;
import io.netty.handler.codec.http.QueryStringDecoder;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.function.Supplier;

/**
 * The node's HTTP endpoints: {@code GET /metrics} (Prometheus text exposition 0.0.4),
 * {@code /health} (200 while the process serves requests), {@code /ready} (200 once every listener
 * is bound and no pipeline has stalled; 503 with the reason otherwise, naming stalled sensors), {@code /status} (JSON: sensors and subscribers), the run-time settings
 * under {@code /config/sensors} ({@link SensorSettingsEndpoint}) and the live view's page and files
 * ({@link LivePages}, {@code Cache-Control: no-cache}; its WebSocket is handled before this
 * handler). Other paths get 404, other methods on these paths 405. Shared by all connections
 * (stateless).
 */
@ChannelHandler.Sharable
public final class HttpEndpoints extends SimpleChannelInboundHandler<FullHttpRequest> {
    /** Content type of the Prometheus text exposition format, version 0.0.4. */
    public static final String PROMETHEUS_TEXT = "text/plain; version=0.0.4; charset=utf-8";
    private static final List<String> PATHS = List.of("/metrics", "/health", "/ready", "/status");

    private final PrometheusMeterRegistry prometheus;
    private final NodeMeters meters;
    private final SensorRegistry sensors;
    private final FramePublisher publisher;
    private final Supplier<String> notReady;
    private final ObjectMapper json = new ObjectMapper();
    private final SensorSettingsEndpoint settings;
    private final LivePages live = new LivePages();

    public HttpEndpoints(PrometheusMeterRegistry prometheus, NodeMeters meters, SensorRegistry sensors,
            FramePublisher publisher, ControlConfig control, Supplier<String> notReady) {
        this.settings = new SensorSettingsEndpoint(control, sensors, json);
        this.prometheus = prometheus;
        this.meters = meters;
        this.sensors = sensors;
        this.publisher = publisher;
        this.notReady = notReady;
    }

    @Override
    protected void channelRead0(ChannelHandlerContext ctx, FullHttpRequest request) throws Exception {
        boolean keepAlive = HttpUtil.isKeepAlive(request);
        String path = new QueryStringDecoder(request.uri()).path();
        FullHttpResponse response;
        if (request.decoderResult().isSuccess()
                && (path.equals(SensorSettingsEndpoint.PREFIX) || path.startsWith(SensorSettingsEndpoint.PREFIX + "/"))) {
            // Answered once the sensor's pipeline has applied a change (on this channel's event loop).
            settings.handle(request, path).whenComplete((reply, error) -> ctx.executor().execute(() -> {
                FullHttpResponse r = error == null ? body(reply.status(), reply.contentType(), reply.body())
                        : text(HttpResponseStatus.INTERNAL_SERVER_ERROR, "internal error\n");
                if (error == null) {
                    reply.headers().forEach((k, v) -> r.headers().set(k, v));
                }
                send(ctx, r, keepAlive);
            }));
            return;
        }
        LivePages.Page page = live.get(path);
        if (!request.decoderResult().isSuccess()) {
            response = text(HttpResponseStatus.BAD_REQUEST, "bad request\n");
        } else if (!PATHS.contains(path) && page == null) {
            response = text(HttpResponseStatus.NOT_FOUND, "not found\n");
        } else if (!HttpMethod.GET.equals(request.method()) && !HttpMethod.HEAD.equals(request.method())) {
            response = text(HttpResponseStatus.METHOD_NOT_ALLOWED, "method not allowed\n");
            response.headers().set(HttpHeaderNames.ALLOW, "GET, HEAD");
        } else {
            response = page != null ? livePage(page) : switch (path) {
                case "/metrics" -> {
                    meters.refresh();
                    yield body(HttpResponseStatus.OK, PROMETHEUS_TEXT, prometheus.scrape());
                }
                case "/health" -> text(HttpResponseStatus.OK, "ok\n");
                case "/ready" -> {
                    String why = notReady.get();
                    yield why == null ? text(HttpResponseStatus.OK, "ready\n")
                            : text(HttpResponseStatus.SERVICE_UNAVAILABLE, why + "\n");
                }
                default -> body(HttpResponseStatus.OK, "application/json", json.writeValueAsString(status()));
            };
            if (HttpMethod.HEAD.equals(request.method())) {
                response = headOnly(response);
            }
        }
        send(ctx, response, keepAlive);
    }

    private static void send(ChannelHandlerContext ctx, FullHttpResponse response, boolean keepAlive) {
        if (keepAlive) {
            HttpUtil.setKeepAlive(response, true);
            ctx.writeAndFlush(response);
        } else {
            ctx.writeAndFlush(response).addListener(ChannelFutureListener.CLOSE);
        }
    }

    private ObjectNode status() {
        ObjectNode root = json.createObjectNode();
        ArrayNode sensorList = root.putArray("sensors");
        ArrayNode subscriberList = root.putArray("subscribers");
        List<SensorPipeline> all = new ArrayList<>(sensors.all());
        all.sort(Comparator.comparing(SensorPipeline::id));
        for (SensorPipeline p : all) {
            var c = p.counters();
            ObjectNode s = sensorList.addObject();
            s.put("id", p.id());
            s.put("width", p.width());
            s.put("height", p.height());
            s.put("chain", p.config().chain);
            s.put("frameRateHz", p.frameRateHz());
            s.put("packets", c.get(NodeCounter.PACKETS_TCP) + c.get(NodeCounter.PACKETS_UDP) + c.get(NodeCounter.PACKETS_KAFKA));
            s.put("events", c.get(NodeCounter.EVENTS_RECEIVED));
            s.put("eventsShed", c.get(NodeCounter.EVENTS_SHED_LATENCY) + c.get(NodeCounter.EVENTS_SHED_QUEUE));
            s.put("packetsShed", c.get(NodeCounter.PACKETS_SHED_LATENCY) + c.get(NodeCounter.PACKETS_SHED_QUEUE));
            s.put("framesPublished", c.get(NodeCounter.FRAMES_PUBLISHED));
            s.put("pendingPackets", p.pendingPackets());
            s.put("lagSeconds", p.lagNanos() / 1e9);
            s.put("recording", p.recorder() == null ? "off" : p.recorder().status());
            s.put("fromEventTopic", sensors.fromEventTopic(p.id()));
            for (Subscription sub : publisher.subscriptions(p.id())) {
                ObjectNode o = subscriberList.addObject();
                o.put("sensor", sub.sensorId());
                o.put("remote", String.valueOf(sub.channel().remoteAddress()));
                o.put("delivered", sub.delivered());
                o.put("missed", sub.missed());
            }
        }
        return root;
    }

    private static FullHttpResponse text(HttpResponseStatus status, String body) {
        return body(status, "text/plain; charset=utf-8", body);
    }

    private static FullHttpResponse body(HttpResponseStatus status, String contentType, String body) {
        FullHttpResponse r = new DefaultFullHttpResponse(HttpVersion.HTTP_1_1, status,
                Unpooled.copiedBuffer(body, StandardCharsets.UTF_8));
        r.headers().set(HttpHeaderNames.CONTENT_TYPE, contentType);
        r.headers().setInt(HttpHeaderNames.CONTENT_LENGTH, r.content().readableBytes());
        return r;
    }

    private static FullHttpResponse livePage(LivePages.Page page) {
        FullHttpResponse r = new DefaultFullHttpResponse(HttpVersion.HTTP_1_1, HttpResponseStatus.OK,
                Unpooled.wrappedBuffer(page.body()));
        r.headers().set(HttpHeaderNames.CONTENT_TYPE, page.contentType());
        r.headers().set(HttpHeaderNames.CACHE_CONTROL, "no-cache");
        r.headers().setInt(HttpHeaderNames.CONTENT_LENGTH, r.content().readableBytes());
        return r;
    }

    private static FullHttpResponse headOnly(FullHttpResponse full) {
        FullHttpResponse r = new DefaultFullHttpResponse(HttpVersion.HTTP_1_1, full.status(), Unpooled.EMPTY_BUFFER);
        r.headers().set(full.headers());
        full.release();
        return r;
    }

    @Override
    public void exceptionCaught(ChannelHandlerContext ctx, Throwable cause) {
        ctx.close();
    }

    /** Answers 503 with {@code message} on a connection that is refused before any request, and closes it. */
    public static void refuseAndClose(io.netty.channel.Channel channel, String message) {
        FullHttpResponse r = text(HttpResponseStatus.SERVICE_UNAVAILABLE, message + "\n");
        r.headers().set(HttpHeaderNames.CONNECTION, "close");
        channel.writeAndFlush(r).addListener(ChannelFutureListener.CLOSE);
    }
}
