package dev.afterglow.node.guard;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.node.stats.Counters;
import dev.afterglow.node.stats.NodeCounter;
import io.netty.buffer.Unpooled;
import io.netty.channel.embedded.EmbeddedChannel;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;

class ConnectionGuardTest {
    private final AtomicLong nowNanos = new AtomicLong(1_000_000_000L);
    private final Counters counters = new Counters();

    private ConnectionGuard guard(long firstMs, long messageMs, long idleMs) {
        return new ConnectionGuard("test", firstMs, messageMs, idleMs, 0, counters, nowNanos::get, null);
    }

    private void advance(EmbeddedChannel ch, long ms) {
        nowNanos.addAndGet(TimeUnit.MILLISECONDS.toNanos(ms));
        ch.advanceTimeBy(ms, TimeUnit.MILLISECONDS);
        ch.runScheduledPendingTasks();
    }

    @Test
    void shouldCloseAConnectionThatNeverSendsItsFirstMessage() {
        EmbeddedChannel ch = new EmbeddedChannel(guard(5_000, 10_000, 0));
        advance(ch, 4_900);
        assertTrue(ch.isActive());
        advance(ch, 500);
        assertFalse(ch.isActive());
        assertEquals(1, counters.get(NodeCounter.CONNECTIONS_TIMED_OUT));
    }

    @Test
    void shouldCloseAPeerThatTricklesAMessageOneByteAtATime() {
        ConnectionGuard g = guard(60_000, 10_000, 0);
        EmbeddedChannel ch = new EmbeddedChannel(g);
        g.messageComplete(false); // hello done
        for (int s = 0; s < 20 && ch.isActive(); s++) {
            ch.writeInbound(Unpooled.wrappedBuffer(new byte[] {1}));
            advance(ch, 1_000);
        }
        assertFalse(ch.isActive(), "a message still incomplete after 10 s is cut off, however steadily it trickles");
        assertEquals(1, counters.get(NodeCounter.CONNECTIONS_TIMED_OUT));
    }

    @Test
    void shouldKeepABusyConnectionWhoseMessagesComplete() {
        ConnectionGuard g = guard(5_000, 1_000, 3_000);
        EmbeddedChannel ch = new EmbeddedChannel(g);
        for (int s = 0; s < 40; s++) {
            ch.writeInbound(Unpooled.wrappedBuffer(new byte[] {1}));
            g.messageComplete(false);
            advance(ch, 500);
        }
        assertTrue(ch.isActive());
        advance(ch, 3_500);
        assertFalse(ch.isActive(), "silent past the idle limit");
        assertEquals(1, counters.get(NodeCounter.CONNECTIONS_TIMED_OUT));
    }
}
