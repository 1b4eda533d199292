package dev.afterglow.node.ingest;

import dev.afterglow.node.wire.Envelopes;
import dev.afterglow.proto.v1.Envelope;
import dev.afterglow.proto.v1.ErrorReport;
import io.netty.channel.Channel;
import io.netty.channel.ChannelFutureListener;

/** Sends an error report to a TCP peer, then closes the connection. */
public final class ErrorReplies {
    private ErrorReplies() {
    }

    public static void sendAndClose(Channel channel, String code, String message) {
        Envelope e = Envelope.newBuilder()
                .setSchemaVersion(Envelopes.SCHEMA_VERSION)
                .setError(ErrorReport.newBuilder().setCode(code).setMessage(message))
                .build();
        channel.writeAndFlush(Envelopes.delimited(e)).addListener(ChannelFutureListener.CLOSE);
    }
}
