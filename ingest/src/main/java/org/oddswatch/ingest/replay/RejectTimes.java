package org.oddswatch.ingest.replay;

import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.databind.JsonNode;
import java.io.BufferedReader;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.report.html.RejectMark;
import org.oddswatch.ingest.decode.EventDecoder;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * Reads a replay folder's {@code rejects.jsonl} back for the HTML report: per rejected or late record
 * its stream, reason (the outcome for a record without one) and, where the record is JSON and its
 * monitor's {@code event.time} field reads as a time, that event time. A record rejected while it was
 * decoded carries its monitor but no stream; it is counted on the stream its split field names (the
 * stream it would have gone to). Anything that cannot be read keeps a null stream or time, which the
 * report counts apart. Lines that are not JSON are skipped: the file is ours.
 */
final class RejectTimes {

    private RejectTimes() {
    }

    static List<RejectMark> read(Path rejectsFile, List<MonitorDefinition> monitors) throws IOException {
        Map<String, MonitorDefinition> byName = new HashMap<>();
        for (MonitorDefinition monitor : monitors) {
            byName.put(monitor.name(), monitor);
        }
        List<RejectMark> marks = new ArrayList<>();
        if (!Files.isRegularFile(rejectsFile)) {
            return marks;
        }
        try (BufferedReader reader = Files.newBufferedReader(rejectsFile, StandardCharsets.UTF_8)) {
            for (String line = reader.readLine(); line != null; line = reader.readLine()) {
                JsonNode reject = tree(line);
                if (reject == null || !reject.isObject()) {
                    continue;
                }
                String reason = reject.hasNonNull("reason") ? reject.get("reason").asText()
                        : reject.path("outcome").asText("unknown");
                MonitorDefinition monitor = byName.get(reject.path("monitor").asText(""));
                JsonNode record = monitor == null || !reject.hasNonNull("value") ? null : tree(reject.get("value").asText());
                String stream = reject.hasNonNull("stream") ? reject.get("stream").asText() : splitStream(monitor, record);
                marks.add(new RejectMark(stream, reason, record == null ? null : eventTime(record, monitor.event().time())));
            }
        }
        return marks;
    }

    /** The stream the record's split value names, or null when the record or the value is unreadable. */
    private static String splitStream(MonitorDefinition monitor, JsonNode record) {
        if (record == null || !record.isObject()) {
            return null;
        }
        if (monitor.split() == null) {
            return monitor.streamName(null);
        }
        JsonNode value = record.at(monitor.split().field());
        return value.isValueNode() && !value.isNull() ? monitor.streamName(value.asText()) : null;
    }

    private static Instant eventTime(JsonNode record, JsonPointer field) {
        if (!record.isObject() || record.at(field).isMissingNode()) {
            return null;
        }
        try {
            return Instant.ofEpochMilli(EventDecoder.parseTime(record.at(field)));
        } catch (RuntimeException e) {
            return null;
        }
    }

    private static JsonNode tree(String text) {
        try {
            return Json.mapper().readTree(text);
        } catch (IOException e) {
            return null;
        }
    }
}
