package dev.afterglow.node.guard;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import dev.afterglow.node.stats.OnceLog;
import io.netty.channel.Channel;
import io.netty.channel.ChannelDuplexHandler;
import io.netty.channel.ChannelHandlerContext;
import io.netty.channel.ChannelPromise;
import io.netty.util.AttributeKey;
import java.util.concurrent.ScheduledFuture;
import java.util.concurrent.TimeUnit;
import java.util.function.LongSupplier;

/**
 * Timeouts for one TCP connection, first in its pipeline so it sees every byte:
 * <ul>
 * <li>first message: the peer's first complete message (hello, subscribe, request) must arrive
 *     within {@code firstMessageMs};</li>
 * <li>message: once a message has started, it must be complete within {@code messageMs} (a peer
 *     trickling bytes cannot hold a buffer forever);</li>
 * <li>idle: no byte read or written for {@code idleMs} (0: no idle limit);</li>
 * <li>write stall: the connection stays unwritable (the peer does not read) for {@code stallMs}
 *     (0: no limit).</li>
 * </ul>
 * The handler after the message decoder calls {@link #messageComplete} for every whole message.
 * A timeout closes the connection, counted in {@code connections timed out} (or {@code subscribers
 * dropped} for a write stall) and logged once per kind; {@code onTimeout} may send a last word.
 * Checks run every {@value #CHECK_MS} ms on the connection's event loop. One instance per connection.
 */
public final class ConnectionGuard extends ChannelDuplexHandler {
    /** Host monotonic time (ns) the connection last read a byte; set on the channel for policies such as duplicate sensors. */
    public static final AttributeKey<long[]> LAST_READ = AttributeKey.valueOf("afterglow.lastRead");
    private static final long CHECK_MS = 250;

    /** Why a connection was closed. */
    public enum Timeout { FIRST_MESSAGE, MESSAGE, IDLE, WRITE_STALL }

    /** Called on the event loop before a timed-out connection is closed; may write a last message and close it itself. */
    public interface OnTimeout {
        void timedOut(Channel channel, Timeout kind, String message);
    }

    private final String listener;
    private final long firstMessageNanos;
    private final long messageNanos;
    private final long idleNanos;
    private final long stallNanos;
    private final Counters nodeCounters;
    private final LongSupplier clock;
    private final OnTimeout onTimeout;
    private final long[] lastRead = new long[1];
    private long openedNanos;
    private boolean firstMessageSeen;
    private long messageStartNanos;
    private long lastActivityNanos;
    private long unwritableSinceNanos;
    private boolean closing;
    private ScheduledFuture<?> check;

    /**
     * @param listener name for logs ("ingest", "subscribers", "http")
     * @param clock host monotonic nanoseconds
     */
    public ConnectionGuard(String listener, long firstMessageMs, long messageMs, long idleMs, long stallMs,
            Counters nodeCounters, LongSupplier clock, OnTimeout onTimeout) {
        this.listener = listener;
        this.firstMessageNanos = TimeUnit.MILLISECONDS.toNanos(firstMessageMs);
        this.messageNanos = TimeUnit.MILLISECONDS.toNanos(messageMs);
        this.idleNanos = TimeUnit.MILLISECONDS.toNanos(idleMs);
        this.stallNanos = TimeUnit.MILLISECONDS.toNanos(stallMs);
        this.nodeCounters = nodeCounters;
        this.clock = clock;
        this.onTimeout = onTimeout;
    }

    @Override
    public void handlerAdded(ChannelHandlerContext ctx) {
        openedNanos = clock.getAsLong();
        lastActivityNanos = openedNanos;
        lastRead[0] = openedNanos;
        ctx.channel().attr(LAST_READ).set(lastRead);
        check = ctx.executor().scheduleAtFixedRate(() -> check(ctx), CHECK_MS, CHECK_MS, TimeUnit.MILLISECONDS);
    }

    @Override
    public void handlerRemoved(ChannelHandlerContext ctx) {
        if (check != null) {
            check.cancel(false);
        }
    }

    @Override
    public void channelRead(ChannelHandlerContext ctx, Object msg) {
        long now = clock.getAsLong();
        lastActivityNanos = now;
        lastRead[0] = now;
        if (messageStartNanos == 0) {
            messageStartNanos = now; // bytes of a message that is not complete yet
        }
        ctx.fireChannelRead(msg);
    }

    @Override
    public void write(ChannelHandlerContext ctx, Object msg, ChannelPromise promise) {
        lastActivityNanos = clock.getAsLong();
        ctx.write(msg, promise);
    }

    @Override
    public void channelWritabilityChanged(ChannelHandlerContext ctx) {
        unwritableSinceNanos = ctx.channel().isWritable() ? 0 : clock.getAsLong();
        ctx.fireChannelWritabilityChanged();
    }

    /**
     * A whole message has been decoded. {@code morePending}: bytes of a further message are
     * already buffered (its clock starts now).
     */
    public void messageComplete(boolean morePending) {
        firstMessageSeen = true;
        messageStartNanos = morePending ? clock.getAsLong() : 0;
    }

    private void check(ChannelHandlerContext ctx) {
        if (closing || !ctx.channel().isActive()) {
            return;
        }
        long now = clock.getAsLong();
        if (!firstMessageSeen && now - openedNanos > firstMessageNanos) {
            fire(ctx, Timeout.FIRST_MESSAGE, "no complete first message within " + millis(firstMessageNanos) + " ms");
        } else if (messageStartNanos != 0 && now - messageStartNanos > messageNanos) {
            fire(ctx, Timeout.MESSAGE, "message not complete within " + millis(messageNanos) + " ms");
        } else if (idleNanos > 0 && now - lastActivityNanos > idleNanos) {
            fire(ctx, Timeout.IDLE, "idle for " + millis(idleNanos) + " ms");
        } else if (stallNanos > 0 && unwritableSinceNanos != 0 && !ctx.channel().isWritable()
                && now - unwritableSinceNanos > stallNanos) {
            fire(ctx, Timeout.WRITE_STALL, "peer has not read for " + millis(stallNanos) + " ms");
        }
    }

    private void fire(ChannelHandlerContext ctx, Timeout kind, String message) {
        closing = true;
        nodeCounters.increment(kind == Timeout.WRITE_STALL ? NodeCounter.SUBSCRIBERS_DROPPED : NodeCounter.CONNECTIONS_TIMED_OUT);
        OnceLog.warn("timeout:" + listener + ":" + kind, listener + " connection from " + ctx.channel().remoteAddress()
                + " closed: " + message, null);
        if (onTimeout != null && kind != Timeout.WRITE_STALL) {
            onTimeout.timedOut(ctx.channel(), kind, message);
        } else {
            ctx.close();
        }
    }

    private static long millis(long nanos) {
        return TimeUnit.NANOSECONDS.toMillis(nanos);
    }
}
