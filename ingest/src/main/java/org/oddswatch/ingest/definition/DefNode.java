package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonLocation;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.MissingNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.io.IOException;
import java.time.Duration;
import java.time.Instant;
import java.time.OffsetDateTime;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.function.DoublePredicate;
import java.util.function.IntPredicate;
import java.util.regex.Pattern;
import java.util.stream.Collectors;

/**
 * One place in a definition file: its Jackson node, its key path ({@code monitors[0].terms[2].reference})
 * and the file's table of lines. Every accessor that finds a wrong value throws a
 * {@link DefinitionException} naming file, line and key.
 *
 * <p>Plain YAML scalars such as {@code yes}, {@code no} or {@code on} stay text (YAML 1.1 would
 * read them as booleans); only {@code true}/{@code false} are booleans.
 */
final class DefNode {

    /** The longest duration a definition may give, either way: 3660 days (so no arithmetic overflows). */
    static final Duration MAX_DURATION = Duration.ofDays(3660);
    private static final Instant MIN_INSTANT = Instant.parse("0001-01-01T00:00:00Z");
    private static final Instant MAX_INSTANT = Instant.parse("9999-12-31T23:59:59.999Z");
    private static final Pattern BAD_ESCAPE = Pattern.compile("~(?![01])");
    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;

    private final String file;
    /** The line of every key and list element, by path; a {@link JsonNode} keeps no locations. */
    private final Map<String, Integer> lines;
    private final JsonNode node;
    private final String path;

    private DefNode(String file, Map<String, Integer> lines, JsonNode node, String path) {
        this.file = file;
        this.lines = lines;
        this.node = node;
        this.path = path;
    }

    /** Parses one YAML document, recording the line of every key and list element. */
    static DefNode parse(String file, String text) throws DefinitionException {
        Map<String, Integer> lines = new HashMap<>();
        try (JsonParser parser = new YAMLFactory().createParser(text)) {
            if (parser.nextToken() == null) {
                throw new DefinitionException(file, 1, "", "the file is empty");
            }
            lines.put("", line(parser));
            JsonNode root = read(parser, "", lines, file);
            if (parser.nextToken() != null) {
                throw new DefinitionException(file, line(parser), "",
                        "a second YAML document starts here; a definition file holds exactly one");
            }
            return new DefNode(file, lines, root, "");
        } catch (JsonProcessingException e) {
            JsonLocation where = e.getLocation();
            throw new DefinitionException(file, where == null ? 0 : where.getLineNr(), "",
                    "not valid YAML: " + yamlProblem(e.getOriginalMessage()));
        } catch (IOException e) {
            throw new DefinitionException(file, 0, "", "cannot read: " + e.getMessage());
        }
    }

    private static JsonNode read(JsonParser parser, String path, Map<String, Integer> lines, String file)
            throws IOException, DefinitionException {
        JsonToken token = parser.currentToken();
        switch (token) {
            case START_OBJECT:
                ObjectNode object = NODES.objectNode();
                while (parser.nextToken() == JsonToken.FIELD_NAME) {
                    String name = parser.currentName();
                    String childPath = path.isEmpty() ? name : path + "." + name;
                    int line = line(parser);
                    if (object.has(name)) {
                        throw new DefinitionException(file, line, childPath, "duplicate key");
                    }
                    lines.put(childPath, line);
                    parser.nextToken();
                    object.set(name, read(parser, childPath, lines, file));
                }
                return object;
            case START_ARRAY:
                ArrayNode array = NODES.arrayNode();
                while (parser.nextToken() != JsonToken.END_ARRAY) {
                    String childPath = path + "[" + array.size() + "]";
                    lines.put(childPath, line(parser));
                    array.add(read(parser, childPath, lines, file));
                }
                return array;
            case VALUE_STRING:
                return NODES.textNode(parser.getText());
            case VALUE_NUMBER_INT:
                return NODES.numberNode(parser.getBigIntegerValue());
            case VALUE_NUMBER_FLOAT:
                return NODES.numberNode(parser.getDecimalValue());
            case VALUE_TRUE:
            case VALUE_FALSE:
                String text = parser.getText();
                return "true".equalsIgnoreCase(text) || "false".equalsIgnoreCase(text)
                        ? NODES.booleanNode(token == JsonToken.VALUE_TRUE) : NODES.textNode(text);
            case VALUE_NULL:
                return NODES.nullNode();
            default:
                throw new DefinitionException(file, line(parser), path,
                        "unsupported YAML value (a tagged or binary value); write it as plain text");
        }
    }

    private static int line(JsonParser parser) {
        return parser.currentTokenLocation().getLineNr();
    }

    /** SnakeYAML's message without its position lines and source excerpt (the line is reported anyway). */
    private static String yamlProblem(String message) {
        return Arrays.stream(String.valueOf(message).split("\n"))
                .filter(part -> !part.isBlank() && !Character.isWhitespace(part.charAt(0)))
                .map(String::strip).collect(Collectors.joining(": "));
    }

    String path() {
        return path;
    }

    JsonNode json() {
        return node;
    }

    /** Whether the key exists and is not null. */
    boolean present() {
        return !node.isMissingNode() && !node.isNull();
    }

    DefNode get(String name) {
        JsonNode child = node.isObject() ? node.get(name) : null;
        return new DefNode(file, lines, child == null ? MissingNode.getInstance() : child,
                path.isEmpty() ? name : path + "." + name);
    }

    /** The child, which must be present. */
    DefNode require(String name) throws DefinitionException {
        DefNode child = get(name);
        errorIf(!child.present(), "missing required key '" + name + "'");
        return child;
    }

    DefinitionException error(String problem) {
        return errorAt(path, problem);
    }

    /** Throws {@code problem} at this node when {@code wrong}. */
    void errorIf(boolean wrong, String problem) throws DefinitionException {
        if (wrong) {
            throw error(problem);
        }
    }

    /** An error at {@code at}, on the line of that key or of its nearest ancestor with one. */
    DefinitionException errorAt(String at, String problem) {
        String p = at;
        Integer line = lines.get(p);
        while (line == null && !p.isEmpty()) {
            p = p.substring(0, Math.max(0, Math.max(p.lastIndexOf('.'), p.lastIndexOf('['))));
            line = lines.get(p);
        }
        return new DefinitionException(file, line == null ? 0 : line, at, problem);
    }

    /** This node, checked to be a mapping with no keys outside {@code allowed}. */
    DefNode mapping(String... allowed) throws DefinitionException {
        errorIf(!node.isObject(), "expected a mapping, found " + describe());
        Set<String> known = new TreeSet<>(List.of(allowed));
        for (String name : (Iterable<String>) node::fieldNames) {
            if (!known.contains(name)) {
                throw get(name).error("unknown key (expected one of " + String.join(", ", known) + ")");
            }
        }
        return this;
    }

    List<DefNode> elements() throws DefinitionException {
        errorIf(!node.isArray(), "expected a list, found " + describe());
        List<DefNode> list = new ArrayList<>(node.size());
        for (int i = 0; i < node.size(); i++) {
            list.add(new DefNode(file, lines, node.get(i), path + "[" + i + "]"));
        }
        return list;
    }

    /** A scalar as text: strings as they are, numbers and booleans in their plain form. */
    String text() throws DefinitionException {
        errorIf(!node.isValueNode() || node.isNull(), "expected a text value, found " + describe());
        return node.isNumber() ? node.numberValue().toString() : node.asText();
    }

    String text(String fallback) throws DefinitionException {
        return present() ? text() : fallback;
    }

    /** A non-empty text value. */
    String name() throws DefinitionException {
        String text = text();
        errorIf(text.isBlank(), "must not be empty");
        return text;
    }

    /** A non-empty text value, or null when absent. */
    String optionalName() throws DefinitionException {
        return present() ? name() : null;
    }

    List<String> texts() throws DefinitionException {
        List<String> values = new ArrayList<>();
        for (DefNode element : elements()) {
            values.add(element.text());
        }
        return values;
    }

    /** {@code true}/{@code false}, also written {@code yes}/{@code no} or {@code on}/{@code off}. */
    boolean bool(boolean fallback) throws DefinitionException {
        if (!present()) {
            return fallback;
        }
        if (node.isBoolean()) {
            return node.booleanValue();
        }
        switch (node.isTextual() ? node.textValue().toLowerCase(Locale.ROOT) : "") {
            case "yes": case "on": case "true":
                return true;
            case "no": case "off": case "false":
                return false;
            default:
                throw error("expected true or false, found " + describe());
        }
    }

    /** A number, or {@code fallback} when absent; a number that is not {@code valid} is an error. */
    double number(double fallback, DoublePredicate valid, String problem) throws DefinitionException {
        double value = fallback;
        if (node.isNumber()) {
            value = node.doubleValue();
        } else if (node.isTextual()) {
            try {
                value = Double.parseDouble(node.textValue().trim());
            } catch (NumberFormatException e) {
                throw error("expected a number, found " + describe());
            }
        } else if (present()) {
            throw error("expected a number, found " + describe());
        }
        errorIf(!valid.test(value), problem);
        return value;
    }

    /** A whole number, or {@code fallback} when absent; a number that is not {@code valid} is an error. */
    int integer(int fallback, IntPredicate valid, String problem) throws DefinitionException {
        double value = number(fallback, v -> true, null);
        errorIf(value != Math.rint(value) || Math.abs(value) > Integer.MAX_VALUE,
                "expected a whole number, found " + describe());
        errorIf(!valid.test((int) value), problem);
        return (int) value;
    }

    /** An ISO-8601 duration ({@code P28D}, {@code PT30S}) of whole milliseconds, at most {@link #MAX_DURATION}. */
    private Duration duration(Duration fallback) throws DefinitionException {
        if (!present()) {
            return fallback;
        }
        String text = text();
        Duration value;
        try {
            value = Duration.parse(text);
        } catch (DateTimeParseException e) {
            throw error("'" + text + "' is not an ISO-8601 duration (for example P28D or PT30S)");
        }
        errorIf(value.abs().compareTo(MAX_DURATION) > 0,
                text + " is longer than the longest duration allowed, " + MAX_DURATION.toDays() + " days (P"
                        + MAX_DURATION.toDays() + "D)");
        errorIf(value.getNano() % 1_000_000 != 0, text + " is not a whole number of milliseconds");
        return value;
    }

    Duration positiveDuration(Duration fallback) throws DefinitionException {
        Duration value = duration(fallback);
        errorIf(value.isNegative() || value.isZero(), "must be a positive duration");
        return value;
    }

    Duration nonNegativeDuration(Duration fallback) throws DefinitionException {
        Duration value = duration(fallback);
        errorIf(value.isNegative(), "must not be negative");
        return value;
    }

    /** An RFC 3339 instant with an explicit offset, in the years 1 to 9999. */
    Instant instant() throws DefinitionException {
        String text = text();
        Instant value;
        try {
            value = OffsetDateTime.parse(text).toInstant();
        } catch (DateTimeParseException e) {
            throw error("'" + text + "' is not an RFC 3339 time (for example 2026-01-05T00:00:00Z)");
        }
        errorIf(value.isBefore(MIN_INSTANT) || value.isAfter(MAX_INSTANT),
                "'" + text + "' is outside the years 1 to 9999");
        return value;
    }

    /** A JSON Pointer (RFC 6901): '/'-separated tokens with the escapes ~0 and ~1 only. */
    JsonPointer pointer() throws DefinitionException {
        String text = text();
        errorIf(text.isEmpty() || text.charAt(0) != '/',
                "'" + text + "' is not a JSON Pointer: it must start with '/' (for example /exposure/household)");
        errorIf(BAD_ESCAPE.matcher(text).find(),
                "'" + text + "' is not a JSON Pointer: '~' must be followed by 0 or 1");
        try {
            return JsonPointer.compile(text);
        } catch (IllegalArgumentException e) {
            throw error("'" + text + "' is not a JSON Pointer: " + e.getMessage());
        }
    }

    private String describe() {
        if (!present()) {
            return "nothing";
        }
        return node.isObject() ? "a mapping" : node.isArray() ? "a list" : "'" + node.asText() + "'";
    }
}
