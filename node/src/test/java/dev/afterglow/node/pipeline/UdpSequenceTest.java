package dev.afterglow.node.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class UdpSequenceTest {

    @Test
    void shouldClassifyInOrderReorderedDuplicateAndLatePackets() {
        UdpSequence s = new UdpSequence();
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(10));
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(11));
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(14)); // 12 and 13 missing for now
        assertEquals(UdpSequence.Outcome.REORDERED, s.accept(12));
        assertEquals(UdpSequence.Outcome.DUPLICATE, s.accept(12));
        assertEquals(UdpSequence.Outcome.DUPLICATE, s.accept(14));
        assertEquals(0, s.takeLost(), "nothing has left the window yet");
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(14 + 64)); // 13 leaves the window unseen: lost
        assertEquals(1, s.takeLost(), "13 left the window unseen; 15..77 are missing but still inside it (15..78)");
        assertEquals(UdpSequence.Outcome.LATE, s.accept(13));
    }

    @Test
    void shouldCountLossWithinTheWindowWhenItSlides() {
        UdpSequence s = new UdpSequence();
        s.accept(0);
        s.accept(5); // 1..4 missing
        assertEquals(0, s.takeLost());
        s.accept(5 + 63); // window now 5..68: 1..4 left unseen
        assertEquals(4, s.takeLost());
        s.accept(69); // 6..67 were missing; 6 leaves now? window 6..69: 5 left (seen), nothing lost yet
        assertEquals(0, s.takeLost());
        s.accept(70); // window 7..70: 6 left unseen
        assertEquals(1, s.takeLost());
    }

    @Test
    void shouldReadSequenceNumbersAsUnsigned() {
        UdpSequence s = new UdpSequence();
        long big = 0xFFFF_FFFF_FFFF_FFF0L; // 2^64 - 16: negative as a Java long
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(big));
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(big + 3));
        assertEquals(UdpSequence.Outcome.REORDERED, s.accept(big + 1));
        assertEquals(UdpSequence.Outcome.DUPLICATE, s.accept(big + 1));
        // wraps past 2^64 - 1 to 0 and on, in step
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(big + 20));
        assertEquals(0, s.takeLost(), "big + 2 and big + 4 .. big + 19 are still inside the window");
    }

    @Test
    void shouldNotLetOneStrayNumberBlindTheSensor() {
        UdpSequence s = new UdpSequence();
        for (long q = 0; q < 100; q++) {
            assertEquals(UdpSequence.Outcome.NEXT, s.accept(q));
        }
        assertEquals(UdpSequence.Outcome.LATE, s.accept(Long.MAX_VALUE - 3), "a number far out of step is dropped");
        for (long q = 100; q < 200; q++) {
            assertEquals(UdpSequence.Outcome.NEXT, s.accept(q), "the real packets go on");
        }
        assertEquals(0, s.takeLost());
        assertEquals(0, s.takeResyncs());
    }

    @Test
    void shouldResynchroniseWhenTheSenderRenumbers() {
        UdpSequence s = new UdpSequence();
        for (long q = 1_000_000; q < 1_000_100; q++) {
            s.accept(q);
        }
        // the sender restarted at 0
        for (long q = 0; q < UdpSequence.RESYNC_PACKETS - 1; q++) {
            assertEquals(UdpSequence.Outcome.LATE, s.accept(q));
        }
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(UdpSequence.RESYNC_PACKETS - 1));
        assertEquals(1, s.takeResyncs());
        assertEquals(UdpSequence.Outcome.NEXT, s.accept(UdpSequence.RESYNC_PACKETS));
        assertEquals(UdpSequence.Outcome.DUPLICATE, s.accept(UdpSequence.RESYNC_PACKETS));
    }
}
