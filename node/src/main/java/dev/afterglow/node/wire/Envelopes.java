package dev.afterglow.node.wire;

import com.google.protobuf.CodedOutputStream;
import com.google.protobuf.InvalidProtocolBufferException;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.SchemaVersion;
import io.netty.buffer.ByteBuf;
import io.netty.buffer.ByteBufInputStream;
import io.netty.buffer.Unpooled;
import java.io.IOException;

/** Parsing envelopes from buffers and encoding them with the varint length prefix. */
public final class Envelopes {
    /** The schema version this node speaks. */
    public static final int SCHEMA_VERSION = SchemaVersion.SCHEMA_VERSION_1_VALUE;

    private Envelopes() {
    }

    /** Parses one envelope from all readable bytes of {@code buf} (not released here). */
    public static Envelope parse(ByteBuf buf) throws InvalidProtocolBufferException {
        if (buf.nioBufferCount() == 1) {
            return Envelope.parseFrom(buf.nioBuffer());
        }
        try (ByteBufInputStream in = new ByteBufInputStream(buf.duplicate())) {
            return Envelope.parseFrom(in);
        } catch (InvalidProtocolBufferException e) {
            throw e;
        } catch (IOException e) {
            throw new InvalidProtocolBufferException(e);
        }
    }

    /** The envelope with its varint length prefix, in a new heap buffer. */
    public static ByteBuf delimited(Envelope envelope) {
        int size = envelope.getSerializedSize();
        byte[] bytes = new byte[CodedOutputStream.computeUInt32SizeNoTag(size) + size];
        CodedOutputStream out = CodedOutputStream.newInstance(bytes);
        try {
            out.writeUInt32NoTag(size);
            envelope.writeTo(out);
            out.checkNoSpaceLeft();
        } catch (IOException e) {
            throw new IllegalStateException("encoding into an exactly sized array failed", e);
        }
        return Unpooled.wrappedBuffer(bytes);
    }
}
