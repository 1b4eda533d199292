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
 * after it: the next handler counts it and closes the connection. Emits retained slices.
 */
public final class BoundedVarintFrameDecoder extends ByteToMessageDecoder {
    private final int maxLength;
    private final Runnable onTruncated;

    /**
     * @param maxLength the largest accepted message length in bytes
     * @param onTruncated called once if the stream ends inside a message
     */
    public BoundedVarintFrameDecoder(int maxLength, Runnable onTruncated) {
        this.maxLength = maxLength;
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
                throw new CorruptedFrameException("length prefix longer than 5 bytes");
            }
        }
        if (length > maxLength) {
            throw new TooLongFrameException("message length " + length + " > " + maxLength);
        }
        if (in.readableBytes() < length) {
            in.readerIndex(start);
            return;
        }
        out.add(in.readRetainedSlice((int) length));
    }
}
