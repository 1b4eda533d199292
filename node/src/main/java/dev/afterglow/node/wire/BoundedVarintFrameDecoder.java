package dev.afterglow.node.wire;

import io.netty.buffer.ByteBuf;
import io.netty.channel.ChannelHandlerContext;
import io.netty.handler.codec.ByteToMessageDecoder;
import io.netty.handler.codec.CorruptedFrameException;
import io.netty.handler.codec.TooLongFrameException;
import java.util.List;

/**
 * Splits a stream into messages each preceded by its length as a protobuf base-128 varint, and
 * refuses any length above a maximum (Netty's own varint decoder has no limit). A length that is
 * too long or a varint longer than 5 bytes raises an exception and the stream cannot be trusted
 * after it: the next handler counts it and closes the connection, and this decoder discards every
 * byte from there on (those still buffered and any that arrive before the close), so nothing read
 * from inside the refused message is ever taken for a frame. Emits retained slices.
 */
public final class BoundedVarintFrameDecoder extends ByteToMessageDecoder {
    private final int maxLength;
    /** Limit of the next message: the first message's own (smaller) limit until one has passed. */
    private int limit;
    private final Runnable onTruncated;
    /** Set once a prefix has been refused: the rest of the stream is discarded. */
    private boolean failed;

    /**
     * @param maxLength the largest accepted message length in bytes
     * @param onTruncated called once if the stream ends inside a message
     */
    public BoundedVarintFrameDecoder(int maxLength, Runnable onTruncated) {
        this(maxLength, maxLength, onTruncated);
    }

    /**
     * @param firstMaxLength the largest accepted length of the first message (a hello): until a
     *     peer has said who it is, it cannot make the node hold more than this for it
     * @param maxLength the largest accepted length of every later message
     * @param onTruncated called once if the stream ends inside a message
     */
    public BoundedVarintFrameDecoder(int firstMaxLength, int maxLength, Runnable onTruncated) {
        this.maxLength = maxLength;
        this.limit = Math.min(firstMaxLength, maxLength);
        this.onTruncated = onTruncated;
    }

    /** True while bytes of a message that is not complete yet are buffered. */
    public boolean hasPartial() {
        return internalBuffer().isReadable();
    }

    @Override
    protected void decodeLast(ChannelHandlerContext ctx, ByteBuf in, List<Object> out) throws Exception {
        decode(ctx, in, out);
        if (in.isReadable()) {
            in.skipBytes(in.readableBytes());
            onTruncated.run();
        }
    }

    @Override
    protected void decode(ChannelHandlerContext ctx, ByteBuf in, List<Object> out) {
        if (failed) {
            in.skipBytes(in.readableBytes());
            return;
        }
        in.markReaderIndex();
        int start = in.readerIndex();
        long length = 0;
        int shift = 0;
        while (true) {
            if (!in.isReadable()) {
                in.readerIndex(start);
                return;
            }
            byte b = in.readByte();
            length |= (long) (b & 0x7F) << shift;
            if (b >= 0) {
                break;
            }
            shift += 7;
            if (shift >= 35) {
                throw refuse(in, new CorruptedFrameException("length prefix longer than 5 bytes"));
            }
        }
        if (length > limit) {
            throw refuse(in, new TooLongFrameException("message length " + length + " > " + limit
                    + (limit < maxLength ? " (first message)" : "")));
        }
        if (in.readableBytes() < length) {
            in.readerIndex(start);
            return;
        }
        out.add(in.readRetainedSlice((int) length));
        limit = maxLength;
    }

    /** Discards the rest of the stream and returns {@code error} to throw. */
    private RuntimeException refuse(ByteBuf in, RuntimeException error) {
        failed = true;
        in.skipBytes(in.readableBytes());
        return error;
    }
}
