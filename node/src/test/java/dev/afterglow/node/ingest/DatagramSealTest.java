package dev.afterglow.node.ingest;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.google.protobuf.ByteString;
import java.util.HexFormat;
import org.junit.jupiter.api.Test;

class DatagramSealTest {

    @Test
    void shouldMatchTheHmacSha256TestVectorOfRfc4231() {
        // RFC 4231, test case 2: key "Jefe", data "what do ya want for nothing?"
        byte[] expected = HexFormat.of().parseHex("5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843");
        DatagramSeal seal = new DatagramSeal();
        assertArrayEquals(expected, seal.tag("Jefe", ByteString.copyFromUtf8("what do ya want for nothing?")));
    }

    @Test
    void shouldRefuseAWrongKeyAChangedMessageAndAShortTag() {
        DatagramSeal seal = new DatagramSeal();
        ByteString message = ByteString.copyFromUtf8("events");
        ByteString tag = ByteString.copyFrom(seal.tag("sixteen-chars-token", message));
        assertTrue(seal.verifies("sixteen-chars-token", message, tag));
        assertFalse(seal.verifies("another-token-of-16", message, tag));
        assertFalse(seal.verifies("sixteen-chars-token", ByteString.copyFromUtf8("Events"), tag));
        assertFalse(seal.verifies("sixteen-chars-token", message, tag.substring(0, 16)));
    }
}
