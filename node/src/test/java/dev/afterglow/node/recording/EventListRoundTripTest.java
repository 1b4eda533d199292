package dev.afterglow.node.recording;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import dev.afterglow.proto.v1.SensorHello;
import dev.afterglow.recording.RecordingReader;
import dev.afterglow.recording.RecordingWriter;
import java.io.IOException;
import java.io.StringReader;
import java.io.StringWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Plain-text event lists into recordings and back: every event, in any column order, unit and separator; bad lines named. */
class EventListRoundTripTest {
    private static final SensorHello HELLO = SensorHello.newBuilder().setSensorId("bench").setWidth(346).setHeight(260).build();
    @TempDir
    Path dir;

    @Test
    void shouldGiveBackEveryEventThroughARecordingInAnotherLayout() throws IOException {
        SplittableRandom r = new SplittableRandom(5);
        StringBuilder in = new StringBuilder("# recorded on the bench\nx;y;p;t_ms\n\n");
        List<String> expected = new ArrayList<>();
        long t = 1_234_567;
        for (int i = 0; i < 50_000; i++) {
            t += r.nextInt(40);
            int x = r.nextInt(346);
            int y = r.nextInt(260);
            boolean on = r.nextBoolean();
            // milliseconds with three decimals: microseconds exactly
            in.append(x).append(';').append(y).append(';').append(on ? "1" : "-1").append(';')
                    .append(t / 1000).append('.').append(String.format("%03d", t % 1000)).append('\n');
            expected.add(t + "\t" + x + "\t" + y + "\t" + (on ? 1 : 0));
        }
        EventListImport importer = new EventListImport(EventTable.parse("x,y,p,t", "semicolon", "ms", "1/-1"), HELLO, 1000, false);
        EventListImport.Result result = importer.run(new StringReader(in.toString()), dir, "bench",
                RecordingWriter.Settings.keepAll(), 1_700_000_000_000_000L);
        assertEquals(50_000, result.events());
        assertTrue(result.firstUs() >= 1_234_567 && result.lastUs() == t, "first and last times");
        try (RecordingReader rec = RecordingReader.open(dir)) {
            assertEquals("bench", rec.header().getHello().getSensorId());
            long packets = 0;
            long previousArrival = -1;
            for (RecordingReader.Item item; (item = rec.next()) != null; ) {
                if (item.envelope().hasEvents()) {
                    var p = item.envelope().getEvents();
                    assertTrue(p.getEventCount() <= EventListImport.MAX_PACKET_EVENTS);
                    assertEquals(packets, p.getSequence());
                    assertTrue(item.arrivalUs() >= previousArrival, "arrivals in order");
                    previousArrival = item.arrivalUs();
                    packets++;
                }
            }
            assertEquals(result.packets(), packets);
        }
        StringWriter out = new StringWriter();
        EventListExport.Result exported = new EventListExport(EventTable.parse("t,x,y,p", "tab", "us", "1/0"), false).run(dir, out);
        assertEquals(50_000, exported.events());
        assertEquals(expected, out.toString().lines().toList());
    }

    @Test
    void shouldWriteSecondsWithMicrosecondDecimalsAndAHeader() throws IOException {
        EventListImport importer = new EventListImport(EventTable.parse("t,x,y,p", "space", "ns", "1/0"), HELLO, 500, false);
        importer.run(new StringReader("1000000  3 4 1\n2500999\t7 8 0\n"), dir, "s", RecordingWriter.Settings.keepAll(), 0);
        StringWriter out = new StringWriter();
        new EventListExport(EventTable.parse("p,t,y,x", "comma", "s", "1/-1"), true).run(dir, out);
        assertEquals(List.of("p,t,y,x", "1,0.001000,4,3", "-1,0.002500,8,7"), out.toString().lines().toList(),
                "ns truncated to whole us on import (2500999 ns -> 2500 us)");
    }

    @Test
    void shouldNameTheBadLineOrSkipAndCountIt() throws IOException {
        String list = "t,x,y,p\n10,1,1,1\n20,400,1,1\n15,2,2,0\n30,abc,2,1\n40,1,1\n50,3,3,1\n";
        EventTable table = EventTable.parse("t,x,y,p", "comma", "us", "1/0");
        BadEventLineException outside = assertThrows(BadEventLineException.class, () -> new EventListImport(table, HELLO, 1000, false)
                .run(new StringReader(list), dir.resolve("a"), "a", RecordingWriter.Settings.keepAll(), 0));
        assertEquals("line 3: pixel (400, 1) outside the 346x260 sensor", outside.getMessage());
        EventListImport.Result skipped = new EventListImport(table, HELLO, 1000, true)
                .run(new StringReader(list), dir.resolve("b"), "b", RecordingWriter.Settings.keepAll(), 0);
        assertEquals(3, skipped.events(), "lines 2, 4 (15 us is after line 2's 10 us once line 3 is skipped) and 7");
        assertEquals(3, skipped.badLines(), "outside, not a number, too few fields");
        assertEquals("line 3: pixel (400, 1) outside the 346x260 sensor", skipped.firstBadLine());
        BadEventLineException backwards = assertThrows(BadEventLineException.class, () -> new EventListImport(table, HELLO, 1000, false)
                .run(new StringReader("20,1,1,1\n15,2,2,0\n"), dir.resolve("c"), "c", RecordingWriter.Settings.keepAll(), 0));
        assertEquals("line 2: time goes backwards: 15 us after 20 us", backwards.getMessage());
        assertThrows(IllegalArgumentException.class, () -> EventTable.parse("t,x,x,p", "comma", "us", "1/0"));
        assertThrows(IllegalArgumentException.class, () -> EventTable.parse("t,x,y,p", "comma", "minutes", "1/0"));
        assertThrows(IllegalArgumentException.class, () -> new EventListExport(EventTable.parse("t,_,x,y,p", "comma", "us", "1/0"), false));
    }
}
