package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import java.nio.ByteBuffer;
import org.junit.jupiter.api.Test;

class HoldFrameTest {

    @Test
    void shouldShowTheLatestFrameAndIgnoreEvents() {
        Chain chain = Chain.build("hold-frame", 4, 2);
        HoldFrame hold = (HoldFrame) chain.reconstruction();
        float[] out = new float[8];
        hold.readLog(0, out);
        for (float v : out) {
            assertEquals(0, v, "flat before the first frame");
        }
        byte[] px = {0, 10, 20, 30, 40, 50, (byte) 200, (byte) 255};
        hold.applyFrame(1_000, ByteBuffer.wrap(px), 8);
        EventBatch events = new EventBatch(2);
        events.reset(1_000);
        events.add(1, 0, 1_500, 1);
        events.add(2, 1, 1_600, -1);
        chain.process(events);
        hold.readLog(2_000, out);
        for (int i = 0; i < 8; i++) {
            assertEquals(SensorFrameLog.logOf(px[i] & 0xFF, 8), out[i], 1e-6, "pixel " + i);
        }
        assertEquals(2, hold.counters().eventsIn());
        assertTrue(hold.describe().equals("hold-frame"));
    }
}
