package dev.afterglow.filters.recon;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Checks {@link SensorFrameLog} for every pixel value against its documented rule: log intensity
 * {@code ln((v + 1) / (M + 1))} with M = 2^bits - 1, class 1 when {@code v / M >= saturated} or
 * {@code v / M <= dark}.
 */
class SensorFrameLogTest {

    @ParameterizedTest(name = "{0} bits saturated {1} dark {2}")
    @CsvSource({
        "8, 0.95, 0.05",
        "8, 0.2, 0.1",
        "8, 1, 0",
        "8, 0.7, 0.3",
        "8, 0.01, 0",
        "10, 0.95, 0.05",
        "12, 0.9, 0.02",
        "16, 0.99, 0.001",
    })
    void shouldConvertEveryValueAndClassifyItByTheDocumentedThresholds(int bits, double saturated, double dark) {
        int full = (1 << bits) - 1;
        int count = full + 1;
        int bytesPer = bits == 8 ? 1 : 2;
        ByteBuffer buf = ByteBuffer.allocate(count * bytesPer).order(ByteOrder.LITTLE_ENDIAN);
        for (int v = 0; v <= full; v++) {
            if (bytesPer == 1) {
                buf.put((byte) v);
            } else {
                buf.putShort((short) v);
            }
        }
        buf.flip();
        float[] log = new float[count];
        byte[] cls = new byte[count];
        new SensorFrameLog(saturated, dark).convert(buf, bits, count, log, cls);
        for (int v = 0; v <= full; v++) {
            double want = ComplementaryFilterTest.naiveLog(v, bits);
            assertEquals(want, log[v], 1e-6 * Math.max(1, Math.abs(want)), "log of " + v);
            assertEquals(ComplementaryFilterTest.naiveClass(v, bits, saturated, dark), cls[v], "class of " + v);
        }
    }

    @ParameterizedTest(name = "{0} bits, {1} bytes")
    @CsvSource({"8, 3", "8, 5", "12, 4", "12, 7", "7, 4", "17, 8"})
    void shouldRejectFramesOfTheWrongSizeOrDepth(int bits, int bytes) {
        ByteBuffer buf = ByteBuffer.allocate(bytes);
        assertThrows(IllegalArgumentException.class,
                () -> new SensorFrameLog(0.95, 0.05).convert(buf, bits, 4, new float[4], new byte[4]));
    }
}
