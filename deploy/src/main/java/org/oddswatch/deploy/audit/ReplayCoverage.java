package org.oddswatch.deploy.audit;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.file.Path;
import java.time.Instant;
import java.util.HashMap;
import java.util.Map;
import org.oddswatch.alerts.json.Json;

/**
 * What a replay covered, from its {@code summary.json}: the reported range ({@code from}, {@code to},
 * null when open) and per stream the ends of its first and last final windows.
 */
public record ReplayCoverage(Instant from, Instant to, Map<String, Span> streams) {

    /** The ends of a stream's first and last final windows (null when it had none). */
    public record Span(Instant firstWindowEnd, Instant lastWindowEnd) {
    }

    public ReplayCoverage {
        streams = Map.copyOf(streams);
    }

    /** Reads {@code summary.json} of a replay folder. */
    public static ReplayCoverage read(Path summaryJson) throws IOException {
        JsonNode summary = Json.mapper().readTree(summaryJson.toFile());
        Map<String, Span> streams = new HashMap<>();
        for (JsonNode s : summary.path("streams")) {
            streams.put(s.path("stream").asText(), new Span(instant(s.path("firstWindowEnd")),
                    instant(s.path("lastWindowEnd"))));
        }
        return new ReplayCoverage(instant(summary.path("from")), instant(summary.path("to")), streams);
    }

    private static Instant instant(JsonNode node) {
        return node.isTextual() ? Instant.parse(node.asText()) : null;
    }

    /**
     * Why the replay could not have given a message of {@code stream} for the window
     * {@code [start, end)}, or null when the window lies within what it covered.
     */
    String outside(String stream, Instant start, Instant end) {
        Span span = streams.get(stream);
        if (span == null || span.lastWindowEnd() == null) {
            return "the replay has no final window of stream " + stream;
        }
        if (end.isAfter(span.lastWindowEnd())) {
            return "the window ends after the replay's last final window of the stream (ending "
                    + span.lastWindowEnd() + "): the replay's events stop earlier";
        }
        if (end.isBefore(span.firstWindowEnd())) {
            return "the window ends before the replay's first final window of the stream (ending "
                    + span.firstWindowEnd() + ")";
        }
        if ((from != null && start != null && start.isBefore(from)) || (to != null && end.isAfter(to))) {
            return "the window lies outside the replay's range (" + (from == null ? "start" : from) + " to "
                    + (to == null ? "end" : to) + ")";
        }
        return null;
    }
}
