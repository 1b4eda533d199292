package dev.afterglow.node.wire;

import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import dev.afterglow.filters.fuzz.FuzzInputs;
import io.netty.buffer.ByteBuf;
import io.netty.buffer.AbstractByteBufAllocator;
import io.netty.buffer.UnpooledDirectByteBuf;
import io.netty.buffer.UnpooledHeapByteBuf;
import io.netty.channel.embedded.EmbeddedChannel;
import io.netty.handler.codec.CorruptedFrameException;
import io.netty.handler.codec.DecoderException;
import io.netty.handler.codec.TooLongFrameException;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * Test helpers for the framing fuzz targets: an allocator that remembers every buffer it hands
 * out (so a test can check that each one was released, input by input, rather than waiting for
 * the leak detector's garbage-collection reports), and a driver that feeds a byte stream to a
 * {@link BoundedVarintFrameDecoder} in given pieces and records what comes out.
 */
final class FrameStreams {
    private FrameStreams() {
    }

    /** Unpooled buffers, each remembered; {@link #assertAllReleased} checks them. */
    static final class TrackingAllocator extends AbstractByteBufAllocator {
        private final List<ByteBuf> handedOut = new ArrayList<>();

        TrackingAllocator(boolean preferDirect) {
            super(preferDirect);
        }

        @Override
        protected ByteBuf newHeapBuffer(int initialCapacity, int maxCapacity) {
            ByteBuf b = new UnpooledHeapByteBuf(this, initialCapacity, maxCapacity);
            handedOut.add(b);
            return b;
        }

        @Override
        protected ByteBuf newDirectBuffer(int initialCapacity, int maxCapacity) {
            ByteBuf b = new UnpooledDirectByteBuf(this, initialCapacity, maxCapacity);
            handedOut.add(b);
            return b;
        }

        @Override
        public boolean isDirectBufferPooled() {
            return false;
        }

        /** Every buffer handed out has a reference count of 0. */
        void assertAllReleased(String what) {
            for (int i = 0; i < handedOut.size(); i++) {
                if (handedOut.get(i).refCnt() != 0) {
                    fail(what + ": buffer " + i + " of " + handedOut.size() + " not released (refCnt "
                            + handedOut.get(i).refCnt() + ")");
                }
            }
        }
    }

    /** What a decoder made of a stream: the frames, the first error, how often it reported truncation. */
    record Decoded(List<byte[]> frames, Class<? extends Exception> error, int truncated) {
    }

    /**
     * Writes {@code pieces} one by one into a fresh channel with a decoder of {@code maxLength}
     * (buffers from {@code alloc}), keeps writing after an error as a peer could before the
     * connection is closed, then closes. Checks on the way that every frame is at most
     * {@code maxLength} bytes and that nothing but the two documented framing errors is thrown;
     * releases every frame.
     */
    static Decoded decode(List<byte[]> pieces, int maxLength, TrackingAllocator alloc) {
        AtomicInteger truncated = new AtomicInteger();
        EmbeddedChannel ch = new EmbeddedChannel(new BoundedVarintFrameDecoder(maxLength, truncated::incrementAndGet));
        ch.config().setAllocator(alloc);
        List<byte[]> frames = new ArrayList<>();
        Class<? extends Exception> error = null;
        for (byte[] piece : pieces) {
            ByteBuf in = alloc.buffer(piece.length);
            in.writeBytes(piece);
            try {
                ch.writeInbound(in);
            } catch (RuntimeException e) {
                error = firstOf(error, framingError(e));
            }
            drain(ch, maxLength, frames);
        }
        try {
            ch.finish();
        } catch (RuntimeException e) {
            error = firstOf(error, framingError(e));
        }
        drain(ch, maxLength, frames);
        return new Decoded(frames, error, truncated.get());
    }

    private static Class<? extends Exception> firstOf(Class<? extends Exception> first, Class<? extends Exception> next) {
        return first != null ? first : next;
    }

    /** The framing error class of {@code e}; fails the test for anything else. */
    private static Class<? extends Exception> framingError(RuntimeException e) {
        Throwable t = e instanceof DecoderException && e.getCause() != null ? e.getCause() : e;
        if (t instanceof TooLongFrameException) {
            return TooLongFrameException.class;
        }
        if (t instanceof CorruptedFrameException) {
            return CorruptedFrameException.class;
        }
        throw new AssertionError("the decoder threw something other than a framing error", e);
    }

    private static void drain(EmbeddedChannel ch, int maxLength, List<byte[]> frames) {
        for (ByteBuf frame; (frame = ch.readInbound()) != null; ) {
            try {
                assertTrue(frame.readableBytes() <= maxLength, "frame of " + frame.readableBytes() + " > " + maxLength);
                byte[] b = new byte[frame.readableBytes()];
                frame.readBytes(b);
                frames.add(b);
            } finally {
                frame.release();
            }
        }
    }

    /** A pretty form of pieces for failure messages. */
    static String show(List<byte[]> pieces) {
        StringBuilder b = new StringBuilder();
        for (byte[] p : pieces) {
            b.append(b.length() == 0 ? "" : " | ").append(FuzzInputs.hex(p));
        }
        return FuzzInputs.abbreviate(b.toString());
    }
}
