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
}
