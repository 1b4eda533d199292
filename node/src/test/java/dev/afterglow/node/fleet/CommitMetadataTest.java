package dev.afterglow.node.fleet;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import org.junit.jupiter.api.Test;

/**
 * The hand-over metadata a member reads from the group's last commit: anyone who may commit for
 * the group can write it, so bad numbers must give "no re-read bound", never an overflow.
 */
class CommitMetadataTest {
    private static final long NOW = 1_800_000_000_000L;
    private static final long SLACK = 100 + 500; // one poll plus the slack, as in EventTopicSource

    private static Long until(String metadata) {
        return EventTopicSource.uncleanUntil(metadata, "b", 200, NOW);
    }

    @Test
    void anUncleanCommitOfAnotherMemberBoundsTheReReads() {
        assertEquals(NOW - 1000 + 200 + SLACK, until("afterglow;member=a;clean=0;t=" + (NOW - 1000)));
    }

    @Test
    void cleanOwnOrForeignCommitsGiveNoBound() {
        assertNull(until("afterglow;member=a;clean=1;t=" + NOW));
        assertNull(until("afterglow;member=b;clean=0;t=" + NOW), "its own commit");
        assertNull(until("someone-else;member=a;clean=0;t=" + NOW));
        assertNull(until(null));
        assertNull(until(""));
    }

    @Test
    void badNumbersGiveNoBoundOrAreCappedAtNow() {
        assertNull(until("afterglow;member=a;clean=0;t=not-a-number"));
        assertNull(until("afterglow;member=a;clean=0;t=-5"));
        assertNull(until("afterglow;member=a;clean=0;t=99999999999999999999999"), "beyond a long");
        assertNull(until("afterglow;member=a;clean=0"), "no time");
        assertNull(until("afterglow;clean=0;t=" + NOW), "no member");
        // A time far in the future (or Long.MAX_VALUE) counts as now: no overflow into the past.
        assertEquals(NOW + 200 + SLACK, until("afterglow;member=a;clean=0;t=" + Long.MAX_VALUE));
        assertEquals(NOW + 200 + SLACK, until("afterglow;member=a;clean=0;t=" + (NOW + 86_400_000L)));
    }
}
