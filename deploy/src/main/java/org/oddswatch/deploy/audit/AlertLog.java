package org.oddswatch.deploy.audit;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import java.io.BufferedReader;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.json.Json;

/**
 * The alert messages of one side of an audit, read from JSON Lines (an alerts file, a copy of the
 * alerts topic, or a replay's {@code alerts.jsonl}), keyed by {@link MessageKey}. A line that is not
 * an alert (not JSON, no {@code id}, {@code state} or {@code windowEnd}) is counted as a problem with
 * its line number and reason, never with its content. A repeat of a message with the same content
 * (the alerts topic is delivered at least once) is counted and dropped; a repeat with other content is
 * a problem and the first is kept.
 */
public final class AlertLog {

    private final String source;
    private final Map<MessageKey, JsonNode> messages = new LinkedHashMap<>();
    private final List<String> problems = new ArrayList<>();
    private int repeats;
    private int outsideRange;

    private AlertLog(String source) {
        this.source = source;
    }

    /**
     * Reads the messages whose window ends within {@code [from, to]} (either bound null: open).
     *
     * @param source how the file is named in output, e.g. the path or {@code topic oddswatch-alerts}
     */
    public static AlertLog read(Path file, String source, Instant from, Instant to) throws IOException {
        AlertLog log = new AlertLog(source);
        try (BufferedReader in = Files.newBufferedReader(file, StandardCharsets.UTF_8)) {
            String line;
            int number = 0;
            while ((line = in.readLine()) != null) {
                log.add(++number, line, from, to);
            }
        }
        return log;
    }

    private void add(int line, String text, Instant from, Instant to) {
        String where = source + ":" + line + ": ";
        JsonNode alert;
        try {
            alert = text.isBlank() ? null : Json.mapper().readTree(text);
        } catch (JsonProcessingException e) {
            problems.add(where + "not JSON");
            return;
        }
        if (alert == null || !alert.isObject()) {
            problems.add(where + (alert == null ? "empty line" : "not a JSON object"));
            return;
        }
        for (String field : List.of("id", "state", "windowEnd")) {
            if (!alert.path(field).isTextual()) {
                problems.add(where + "no " + field + " (not an alert message)");
                return;
            }
        }
        Instant end;
        try {
            end = Instant.parse(alert.get("windowEnd").asText());
        } catch (DateTimeParseException e) {
            problems.add(where + "windowEnd is not an RFC 3339 time");
            return;
        }
        if ((from != null && end.isBefore(from)) || (to != null && end.isAfter(to))) {
            outsideRange++;
            return;
        }
        MessageKey key = new MessageKey(alert.get("id").asText(), alert.get("state").asText(), end);
        JsonNode first = messages.putIfAbsent(key, alert);
        if (first != null) {
            if (first.equals(alert)) {
                repeats++;
            } else {
                problems.add(where + "repeats the " + key.state() + " message of " + key.id() + " for the window ending "
                        + end + " with other content (the first is compared)");
            }
        }
    }

    public String source() {
        return source;
    }

    /** The messages in the order first read. */
    public Map<MessageKey, JsonNode> messages() {
        return Collections.unmodifiableMap(messages);
    }

    /** Lines that could not be compared, each {@code source:line: reason}. */
    public List<String> problems() {
        return List.copyOf(problems);
    }

    /** Messages read again with the same key and content. */
    public int repeats() {
        return repeats;
    }

    /** Messages left out because their window ends outside the range. */
    public int outsideRange() {
        return outsideRange;
    }
}
