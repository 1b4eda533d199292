package dev.afterglow.node.wire;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.netty.buffer.ByteBuf;
import io.netty.buffer.Unpooled;
import io.netty.channel.embedded.EmbeddedChannel;
import io.netty.handler.codec.CorruptedFrameException;
import io.netty.handler.codec.DecoderException;
import io.netty.handler.codec.TooLongFrameException;
import io.netty.util.ResourceLeakDetector;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

class BoundedVarintFrameDecoderTest {

    @BeforeAll
    static void paranoid() {
        ResourceLeakDetector.setLevel(ResourceLeakDetector.Level.PARANOID);
    }

    @Test
    void shouldReassembleMessagesSplitAcrossWrites() {
        EmbeddedChannel ch = new EmbeddedChannel(new BoundedVarintFrameDecoder(1024, () -> { }));
        // 300-byte message: varint 0xAC 0x02 (protobuf encoding documentation), then a 1-byte message.
        byte[] stream = new byte[2 + 300 + 2];
        stream[0] = (byte) 0xAC;
        stream[1] = 0x02;
        for (int i = 0; i < 300; i++) {
            stream[2 + i] = (byte) i;
        }
        stream[302] = 1;
        stream[303] = 42;
        for (int i = 0; i < stream.length; i += 7) { // 7-byte pieces, the prefix itself split
            ch.writeInbound(Unpooled.wrappedBuffer(stream, i, Math.min(7, stream.length - i)));
        }
        ByteBuf first = ch.readInbound();
        assertEquals(300, first.readableBytes());
        assertEquals((byte) 299, first.getByte(299));
        first.release();
        ByteBuf second = ch.readInbound();
        assertEquals(1, second.readableBytes());
        assertEquals(42, second.getByte(0));
        second.release();
        assertNull(ch.readInbound());
        assertFalse(ch.finish());
    }

    @Test
    void shouldRefuseLengthAboveTheLimit() {
        EmbeddedChannel ch = new EmbeddedChannel(new BoundedVarintFrameDecoder(1024, () -> { }));
        DecoderException e = assertThrows(DecoderException.class,
                () -> ch.writeInbound(Unpooled.wrappedBuffer(new byte[] {(byte) 0x81, 0x08, 0, 0}))); // 1025
        assertTrue(e instanceof TooLongFrameException || e.getCause() instanceof TooLongFrameException, e.toString());
        ch.finishAndReleaseAll();
    }

    /**
     * Found by BoundedVarintFrameDecoderFuzzTest: after refusing a prefix the decoder went on reading
     * from inside the refused message, took its bytes for new prefixes and emitted them as frames
     * (and reported a truncated stream at the close) until the connection was closed. The fuzzer's
     * input: maximum 0, a prefix of 29, then 55 more bytes in pieces of 16, 2, 1, 8 ... bytes.
     */
    @Test
    void shouldEmitNothingAfterRefusingAPrefix() {
        byte[] stream = java.util.HexFormat.of().parseHex("1d56193d8008aa1f60dff8a5b0b9fd0480808080008080808000"
                + "8080808000b703904e5ba0d4b46f5220cabd5be10ecdbe19008080808000");
        int[] pieces = {16, 2, 1, 8, 8, 2, 6, 6, 4, 7, 33, 11};
        AtomicInteger truncated = new AtomicInteger();
        AtomicInteger refused = new AtomicInteger();
        EmbeddedChannel ch = new EmbeddedChannel(new BoundedVarintFrameDecoder(0, truncated::incrementAndGet));
        for (int i = 0, at = 0; at < stream.length; at += pieces[i++]) {
            try {
                ch.writeInbound(Unpooled.wrappedBuffer(stream, at, Math.min(pieces[i], stream.length - at)));
            } catch (TooLongFrameException e) {
                refused.incrementAndGet();
            }
            assertNull(ch.readInbound(), "no frame after the refusal (piece " + i + ")");
        }
        assertFalse(ch.finish());
        assertEquals(1, refused.get(), "refused once; the rest is discarded quietly");
        assertEquals(0, truncated.get(), "a refused stream is not also reported as truncated");
    }

    @Test
    void shouldDiscardTheRestOfTheStreamAfterAPrefixLongerThanFiveBytes() {
        AtomicInteger truncated = new AtomicInteger();
        EmbeddedChannel ch = new EmbeddedChannel(new BoundedVarintFrameDecoder(1024, truncated::incrementAndGet));
        // Five continuation bytes, then what would read as a 1-byte message: 0x01 0x2A.
        assertThrows(CorruptedFrameException.class,
                () -> ch.writeInbound(Unpooled.wrappedBuffer(new byte[] {(byte) 0x80, (byte) 0x80, (byte) 0x80, (byte) 0x80, (byte) 0x80, 1, 42})));
        ch.writeInbound(Unpooled.wrappedBuffer(new byte[] {1, 42, 3}));
        assertNull(ch.readInbound());
        assertFalse(ch.finish());
        assertEquals(0, truncated.get());
    }

    @Test
    void shouldReportStreamEndingInsideAMessage() {
        AtomicInteger truncated = new AtomicInteger();
        EmbeddedChannel ch = new EmbeddedChannel(new BoundedVarintFrameDecoder(1024, truncated::incrementAndGet));
        ch.writeInbound(Unpooled.wrappedBuffer(new byte[] {10, 1, 2, 3}));
        assertNull(ch.readInbound());
        ch.finishAndReleaseAll();
        assertEquals(1, truncated.get());
    }
}
