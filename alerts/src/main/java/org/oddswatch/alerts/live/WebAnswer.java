package org.oddswatch.alerts.live;

import java.util.Map;
import org.oddswatch.alerts.json.Json;

/**
 * One answer of the live page or its API, before the HTTP layer adds its common headers.
 *
 * @param status the HTTP status
 * @param contentType the media type with its charset
 * @param body the body text (UTF-8 on the wire)
 * @param policy the Content-Security-Policy of this answer, or null for the server's strict default
 */
public record WebAnswer(int status, String contentType, String body, String policy) {

    /** The media type of every API answer. */
    public static final String JSON = "application/json; charset=utf-8";

    /** A JSON answer. */
    public static WebAnswer json(int status, String body) {
        return new WebAnswer(status, JSON, body, null);
    }

    /** A JSON error answer {@code {"error": message}}. */
    public static WebAnswer error(int status, String message) {
        return json(status, Json.write(Map.of("error", message)));
    }
}
