package dev.afterglow.node.wire;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import dev.afterglow.filters.fuzz.FuzzInputs;
import dev.afterglow.filters.fuzz.FuzzTarget;
import io.netty.handler.codec.CorruptedFrameException;
import io.netty.handler.codec.TooLongFrameException;
import io.netty.util.ResourceLeakDetector;
import java.io.ByteArrayOutputStream;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Random;
import net.jqwik.api.Arbitrary;
import net.jqwik.api.ForAll;
import net.jqwik.api.Property;
import net.jqwik.api.Provide;
import net.jqwik.api.lifecycle.AfterContainer;
import net.jqwik.api.lifecycle.BeforeContainer;

/**
 * Fuzz target for the length-prefix framing: streams of valid frames, lengths at and beyond the
 * maximum, over-long and non-minimal varints, noise and truncation, cut into arbitrary pieces and
 * written into an {@code EmbeddedChannel}. Whatever the cut, the decoder must emit exactly the
 * frames a whole-stream reference reader finds (written here from the class Javadoc and the base-128
 * varint of the protobuf encoding documentation: 7 bits per byte, least significant group first,
 * high bit set on every byte but the last), none longer than the maximum, fail with the reference's
 * error (TooLongFrameException or CorruptedFrameException, nothing else), report a stream that ends
 * inside a message once, and release every buffer: checked per input with an allocator that
 * remembers its buffers, and by Netty's leak detector at PARANOID level.
 */
@FuzzTarget
class BoundedVarintFrameDecoderFuzzTest {
    private static ResourceLeakDetector.Level levelBefore;

    @BeforeContainer
    static void paranoid() {
        levelBefore = ResourceLeakDetector.getLevel();
        ResourceLeakDetector.setLevel(ResourceLeakDetector.Level.PARANOID);
    }

    @AfterContainer
    static void restore() {
        ResourceLeakDetector.setLevel(levelBefore);
    }

    /** A stream, the decoder's maximum, the piece sizes to cut it with, and heap or direct buffers. */
    record Input(int maxLength, byte[] stream, int[] pieceSizes, boolean direct) {
        @Override
        public String toString() {
            return "Input[maxLength=" + maxLength + ", direct=" + direct + ", pieceSizes=" + Arrays.toString(pieceSizes)
                    + ", stream(" + stream.length + ")=" + FuzzInputs.hex(stream) + "]";
        }
    }

    @Property
    void emitsTheReferenceFramesWhateverTheCutAndReleasesEveryBuffer(@ForAll("inputs") Input in) {
        assertEquals(ResourceLeakDetector.Level.PARANOID, ResourceLeakDetector.getLevel(), "leak detection on");
        FrameStreams.TrackingAllocator alloc = new FrameStreams.TrackingAllocator(in.direct());
        List<byte[]> pieces = FuzzInputs.cut(in.stream(), in.pieceSizes());

        FrameStreams.Decoded got = FrameStreams.decode(pieces, in.maxLength(), alloc);
        FrameStreams.Decoded want = reference(in.stream(), in.maxLength());

        assertEquals(want.frames().size(), got.frames().size(), "number of frames");
        for (int i = 0; i < want.frames().size(); i++) {
            assertArrayEquals(want.frames().get(i), got.frames().get(i), "frame " + i);
        }
        assertEquals(want.error(), got.error(), "error");
        assertEquals(want.truncated(), got.truncated(), "truncation reports");
        alloc.assertAllReleased("after close");
    }

    /** The whole stream read at once, by the rules of the class Javadoc. */
    static FrameStreams.Decoded reference(byte[] s, int maxLength) {
        List<byte[]> frames = new ArrayList<>();
        int at = 0;
        while (at < s.length) {
            long length = 0;
            int n = 0; // bytes of the prefix read
            while (true) {
                if (at + n == s.length) {
                    return new FrameStreams.Decoded(frames, null, 1); // ends inside the prefix
                }
                int b = s[at + n] & 0xFF;
                length |= (long) (b & 0x7F) << (7 * n);
                n++;
                if (b < 0x80) {
                    break;
                }
                if (n == 5) {
                    return new FrameStreams.Decoded(frames, CorruptedFrameException.class, 0);
                }
            }
            if (length > maxLength) {
                return new FrameStreams.Decoded(frames, TooLongFrameException.class, 0);
            }
            if (at + n + length > s.length) {
                return new FrameStreams.Decoded(frames, null, 1); // ends inside the message
            }
            frames.add(Arrays.copyOfRange(s, at + n, at + n + (int) length));
            at += n + (int) length;
        }
        return new FrameStreams.Decoded(frames, null, 0);
    }

    @Provide
    Arbitrary<Input> inputs() {
        return FuzzInputs.from(BoundedVarintFrameDecoderFuzzTest::input);
    }

    private static Input input(Random r) {
        int maxLength = switch (r.nextInt(4)) {
            case 0 -> FuzzInputs.oneOf(r, 0, 1, 127, 128, 16383, 16384, Integer.MAX_VALUE);
            case 1 -> r.nextInt(5000);
            default -> 1 + r.nextInt(300);
        };
        ByteArrayOutputStream s = new ByteArrayOutputStream();
        for (int segments = r.nextInt(9); segments > 0; segments--) {
            switch (r.nextInt(12)) {
                case 0 -> varint(s, Math.max(0, maxLength) + 1L + r.nextInt(3), r.nextBoolean()); // just too long
                case 1 -> varint(s, r.nextLong() & 0x7_FFFF_FFFFL, false);       // any 35-bit length
                case 2 -> { // more than 5 prefix bytes
                    for (int k = 5 + r.nextInt(3); k > 0; k--) {
                        s.write(0x80 | r.nextInt(0x80));
                    }
                    s.write(r.nextInt(0x80));
                }
                case 3 -> s.writeBytes(FuzzInputs.bytes(r, 20));                  // noise
                default -> {                                                       // a valid frame
                    int cap = (int) Math.min(maxLength, 2000);
                    int length = switch (r.nextInt(4)) {
                        case 0 -> cap;
                        case 1 -> Math.min(cap, r.nextInt(3));
                        default -> r.nextInt(cap + 1);
                    };
                    varint(s, length, r.nextInt(5) == 0);
                    byte[] body = new byte[length];
                    r.nextBytes(body);
                    s.writeBytes(body);
                }
            }
        }
        byte[] stream = s.toByteArray();
        if (r.nextInt(5) == 0 && stream.length > 0) { // the connection ends anywhere
            stream = Arrays.copyOf(stream, r.nextInt(stream.length));
        }
        return new Input(maxLength, stream, FuzzInputs.chunkSizes(r), r.nextBoolean());
    }

    /** A base-128 varint, minimal or padded with 0x80 groups up to 5 bytes (protobuf readers accept both). */
    private static void varint(ByteArrayOutputStream out, long value, boolean padded) {
        int written = 0;
        while (value >= 0x80) {
            out.write((int) (value & 0x7F) | 0x80);
            value >>>= 7;
            written++;
        }
        if (padded) {
            while (written < 4) {
                out.write((int) value | 0x80);
                value = 0;
                written++;
            }
        }
        out.write((int) value);
    }
}
