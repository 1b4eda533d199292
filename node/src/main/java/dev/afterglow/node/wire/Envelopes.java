package dev.afterglow.node.wire;

import com.google.protobuf.CodedInputStream;
import com.google.protobuf.CodedOutputStream;
import com.google.protobuf.InvalidProtocolBufferException;
import com.google.protobuf.UnsafeByteOperations;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SchemaVersion;
import io.netty.buffer.ByteBuf;
import io.netty.buffer.ByteBufAllocator;
import io.netty.buffer.ByteBufUtil;
import io.netty.buffer.UnpooledByteBufAllocator;
import java.io.IOException;

/** Parsing envelopes from buffers and encoding them with the varint length prefix. */
public final class Envelopes {
    /** The schema version this node speaks. */
    public static final int SCHEMA_VERSION = SchemaVersion.SCHEMA_VERSION_1_VALUE;

    private Envelopes() {
    }

    /**
     * Parses one envelope from all readable bytes of {@code buf} (not released here). The bytes are
     * copied once into a fresh array, and bytes fields (a packet's events, a frame's pixels) are
     * views of that array, not second copies: the hot path's only per-packet allocation.
     */
    public static Envelope parse(ByteBuf buf) throws InvalidProtocolBufferException {
        return parse(UnsafeByteOperations.unsafeWrap(ByteBufUtil.getBytes(buf)));
    }

    /** The envelope with its varint length prefix, in a direct buffer from {@code alloc} (release it when sent). */
    public static ByteBuf delimitedDirect(Envelope envelope, ByteBufAllocator alloc) {
        int size = envelope.getSerializedSize();
        int total = CodedOutputStream.computeUInt32SizeNoTag(size) + size;
        return writeDelimited(envelope, size, total, alloc.directBuffer(total, total));
    }

    /** Parses one envelope from {@code bytes} (a sealed datagram's inner envelope); bytes fields alias it. */
    public static Envelope parse(com.google.protobuf.ByteString bytes) throws InvalidProtocolBufferException {
        CodedInputStream in = bytes.newCodedInput();
        in.enableAliasing(true);
        try {
            return Envelope.parseFrom(in);
        } catch (InvalidProtocolBufferException e) {
            throw e;
        } catch (IOException e) {
            throw new InvalidProtocolBufferException(e);
        }
    }

    /** The envelope with its varint length prefix, in a new heap buffer. */
    public static ByteBuf delimited(Envelope envelope) {
        return delimited(envelope, UnpooledByteBufAllocator.DEFAULT);
    }

    /** The envelope with its varint length prefix, in a heap buffer from {@code alloc} (release it when sent). */
    public static ByteBuf delimited(Envelope envelope, ByteBufAllocator alloc) {
        int size = envelope.getSerializedSize();
        int total = CodedOutputStream.computeUInt32SizeNoTag(size) + size;
        return writeDelimited(envelope, size, total, alloc.heapBuffer(total, total));
    }

    /** Writes the length prefix and the envelope ({@code size} bytes, {@code total} with the prefix) into {@code buf}. */
    private static ByteBuf writeDelimited(Envelope envelope, int size, int total, ByteBuf buf) {
        try {
            CodedOutputStream out = buf.hasArray()
                    ? CodedOutputStream.newInstance(buf.array(), buf.arrayOffset() + buf.writerIndex(), total)
                    : CodedOutputStream.newInstance(buf.nioBuffer(buf.writerIndex(), total));
            out.writeUInt32NoTag(size);
            envelope.writeTo(out);
            out.flush();
            out.checkNoSpaceLeft();
            buf.writerIndex(buf.writerIndex() + total);
            return buf;
        } catch (IOException | RuntimeException e) {
            buf.release();
            throw new IllegalStateException("encoding into an exactly sized buffer failed", e);
        }
    }
}
