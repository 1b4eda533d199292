package dev.afterglow.node.live;

import dev.afterglow.node.pipeline.SensorPipeline;
import io.netty.handler.codec.http.QueryStringDecoder;
import java.util.List;
import java.util.Map;

/**
 * A validated live view WebSocket request, {@code GET /live/ws?sensor=ID&fps=N}: the sensor must
 * be known to the node, {@code fps} is an integer in {@value #MIN_FPS}..{@value #MAX_FPS}
 * (default {@value #DEFAULT_FPS}).
 *
 * @param sensor the sensor to watch
 * @param fps frames per second of host time the viewer gets at most
 */
record LiveRequest(SensorPipeline sensor, int fps) {
    static final int MIN_FPS = 1;
    static final int MAX_FPS = 30;
    static final int DEFAULT_FPS = 10;

    /** Outcome of a check: a request, or an HTTP status and a message naming parameter, value and range. */
    record Check(LiveRequest request, int status, String message) {
    }

    static Check parse(String uri, LiveViews views) {
        Map<String, List<String>> q = new QueryStringDecoder(uri).parameters();
        String id = first(q, "sensor");
        if (id == null || id.isEmpty()) {
            return new Check(null, 400, "sensor: missing; expected " + LiveViews.SOCKET_PATH + "?sensor=ID&fps=N");
        }
        int fps = DEFAULT_FPS;
        String fpsText = first(q, "fps");
        if (fpsText != null) {
            try {
                fps = Integer.parseInt(fpsText.trim());
            } catch (NumberFormatException e) {
                return new Check(null, 400, "fps=" + fpsText + ": not an integer; expected " + MIN_FPS + ".." + MAX_FPS);
            }
            if (fps < MIN_FPS || fps > MAX_FPS) {
                return new Check(null, 400, "fps=" + fpsText + ": outside " + MIN_FPS + ".." + MAX_FPS);
            }
        }
        SensorPipeline sensor = views.sensor(id);
        if (sensor == null) {
            return new Check(null, 404, "sensor=" + id + ": unknown sensor (it must be listed or have connected)");
        }
        return new Check(new LiveRequest(sensor, fps), 200, null);
    }

    private static String first(Map<String, List<String>> q, String key) {
        List<String> v = q.get(key);
        return v == null || v.isEmpty() ? null : v.get(0);
    }
}
