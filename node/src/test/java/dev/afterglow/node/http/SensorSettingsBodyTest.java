package dev.afterglow.node.http;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.ObjectMapper;
import dev.afterglow.node.config.SensorConfig;
import io.netty.handler.codec.http.HttpResponseStatus;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** Bodies of {@code PATCH /config/sensors/ID} checked without a node: {@link SensorSettingsEndpoint#validate}. */
class SensorSettingsBodyTest {
    private static SensorConfig current() {
        SensorConfig c = new SensorConfig();
        c.id = "cam";
        c.width = 640;
        c.height = 480;
        c.validate("cam");
        return c;
    }

    /**
     * Found by SensorSettingsFuzzTest: a stage position with more digits than an int holds threw
     * NumberFormatException out of the handler, and the connection was closed without an answer.
     */
    @ParameterizedTest
    @ValueSource(strings = {
        "{\"set\": {\"999999999999999.window\": \"5ms\"}}",
        "{\"set\": {\"2147483648.period\": \"5ms\"}}",
        "{\"set\": {\"99999999999999999999999999999999999999.cutoff\": \"2Hz\"}}"})
    void shouldRefuseAStagePositionBeyondAnIntWithA400NamingThePositions(String body) {
        SensorSettingsEndpoint.Change change = SensorSettingsEndpoint.validate(new ObjectMapper(), "cam", current(), body);
        assertNull(change.next());
        assertNotNull(change.refused());
        assertEquals(HttpResponseStatus.BAD_REQUEST, change.refused().status());
        assertTrue(change.refused().body().contains("the chain has positions 0 .. 2"), change.refused().body());
    }

    @ParameterizedTest
    @ValueSource(strings = {"{\"set\": {\"2.cutoff\": \"2Hz\"}}", "{\"set\": {\"high-pass.cutoff\": \"2Hz\"}}"})
    void shouldStillAcceptAPositionOrStageThatExists(String body) {
        SensorSettingsEndpoint.Change change = SensorSettingsEndpoint.validate(new ObjectMapper(), "cam", current(), body);
        assertNull(change.refused());
        assertEquals(2 * 2 * Math.PI, change.next().chainSpec().stages().get(2).get("cutoff"), 1e-12); // a = 2*pi*f
        assertTrue(change.chainChanged());
    }
}
