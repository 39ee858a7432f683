package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonParseException;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonStreamContext;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.util.JsonParserDelegate;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.cfg.JsonNodeFeature;
import com.fasterxml.jackson.databind.node.MissingNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import com.fasterxml.jackson.dataformat.yaml.YAMLParser;
import java.io.IOException;
import java.time.Duration;
import java.time.Instant;
import java.time.OffsetDateTime;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeSet;
import java.util.function.DoublePredicate;
import java.util.function.IntPredicate;
import java.util.regex.Pattern;
import java.util.stream.Collectors;

/**
 * One place in a definition file: its Jackson node, its key path ({@code monitors[0].terms[2].reference})
 * and the line of every key and list element of the file. An accessor that finds a wrong value throws a
 * {@link DefinitionException} naming file, line and key. Only {@code true}/{@code false} are YAML
 * booleans: {@code yes}, {@code no}, {@code on}, {@code off} stay text.
 */
final class DefNode {

    /** The longest duration a definition may give, either way: 3660 days (so no arithmetic overflows). */
    static final Duration MAX_DURATION = Duration.ofDays(3660);
    private static final Instant MIN_INSTANT = Instant.parse("0001-01-01T00:00:00Z");
    private static final Instant MAX_INSTANT = Instant.parse("9999-12-31T23:59:59.999Z");
    private static final Pattern BAD_ESCAPE = Pattern.compile("~(?![01])");
    private static final ObjectMapper YAML = new ObjectMapper(
            new YAMLFactory().enable(YAMLParser.Feature.PARSE_BOOLEAN_LIKE_WORDS_AS_STRINGS))
            .enable(DeserializationFeature.USE_BIG_DECIMAL_FOR_FLOATS, DeserializationFeature.USE_BIG_INTEGER_FOR_INTS)
            .configure(JsonNodeFeature.STRIP_TRAILING_BIGDECIMAL_ZEROES, false);

    private final String file;
    private final Map<String, Integer> lines;
    private final JsonNode node;
    private final String path;

    private DefNode(String file, Map<String, Integer> lines, JsonNode node, String path) {
        this.file = file;
        this.lines = lines;
        this.node = node;
        this.path = path;
    }

    /** Parses one YAML document. */
    static DefNode parse(String file, String text) throws DefinitionException {
        try (LineIndex parser = new LineIndex(file, YAML.createParser(text))) {
            if (parser.nextToken() == null) {
                throw new DefinitionException(file, 1, "", "the file is empty");
            }
            JsonNode root = YAML.readTree(parser);
            if (parser.nextToken() != null) {
                throw new DefinitionException(file, parser.line(), "",
                        "a second YAML document starts here; a definition file holds exactly one");
            }
            return new DefNode(file, parser.lines, root, "");
        } catch (JsonProcessingException e) {
            if (e.getProcessor() instanceof LineIndex index && index.problem != null) {
                throw index.problem;
            }
            throw new DefinitionException(file, e.getLocation() == null ? 0 : e.getLocation().getLineNr(), "",
                    "not valid YAML: " + e.getOriginalMessage().lines() // without SnakeYAML's position lines
                            .filter(part -> !part.isBlank() && !Character.isWhitespace(part.charAt(0)))
                            .map(String::strip).collect(Collectors.joining(": ")));
        } catch (IOException e) {
            throw new DefinitionException(file, 0, "", "cannot read: " + e.getMessage());
        }
    }

    /** A parser that records, by key path, the line of every key and list element as the tree is read. */
    private static final class LineIndex extends JsonParserDelegate {

        final Map<String, Integer> lines = new HashMap<>();
        private final String file;
        /** A duplicate key or a tagged value, which stops the reading. */
        DefinitionException problem;

        LineIndex(String file, JsonParser parser) {
            super(parser);
            this.file = file;
        }

        int line() {
            return currentTokenLocation().getLineNr();
        }

        @Override
        public JsonToken nextToken() throws IOException {
            JsonToken token = super.nextToken();
            if (token == null || token.isStructEnd()) {
                return token;
            }
            JsonStreamContext at = token.isStructStart() ? getParsingContext().getParent() : getParsingContext();
            if (token == JsonToken.FIELD_NAME && lines.putIfAbsent(path(at), line()) != null) {
                problem = new DefinitionException(file, line(), path(at), "duplicate key");
            } else if (token == JsonToken.VALUE_EMBEDDED_OBJECT) {
                problem = new DefinitionException(file, line(), path(at),
                        "unsupported YAML value (a tagged or binary value); write it as plain text");
            } else if (at.inArray() || at.inRoot()) {
                lines.putIfAbsent(path(at), line());
            }
            if (problem != null) {
                throw new JsonParseException(this, problem.getMessage());
            }
            return token;
        }

        private static String path(JsonStreamContext at) {
            if (at.inRoot()) {
                return "";
            }
            String parent = path(at.getParent());
            return at.inArray() ? parent + "[" + at.getCurrentIndex() + "]"
                    : parent.isEmpty() ? at.getCurrentName() : parent + "." + at.getCurrentName();
        }
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
        TreeSet<String> known = new TreeSet<>(List.of(allowed));
        for (String name : (Iterable<String>) node::fieldNames) {
            get(name).errorIf(!known.contains(name), "unknown key (expected one of " + String.join(", ", known) + ")");
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
        if (!present() || node.isBoolean()) {
            return present() ? node.booleanValue() : fallback;
        }
        return switch (node.isTextual() ? node.textValue().toLowerCase(Locale.ROOT) : "") {
            case "yes", "on", "true" -> true;
            case "no", "off", "false" -> false;
            default -> throw error("expected true or false, found " + describe());
        };
    }

    /** A number, or {@code fallback} when absent; a number that is not {@code valid} is an error. */
    double number(double fallback, DoublePredicate valid, String problem) throws DefinitionException {
        double value = fallback;
        try {
            if (node.isNumber() || node.isTextual()) {
                value = node.isNumber() ? node.doubleValue() : Double.parseDouble(node.textValue().trim());
            } else if (present()) {
                throw new NumberFormatException();
            }
        } catch (NumberFormatException e) {
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

    /**
     * An ISO-8601 duration ({@code P28D}, {@code PT30S}) of whole milliseconds, at most {@link #MAX_DURATION},
     * or {@code fallback} when absent; never negative, zero only when {@code zeroAllowed}.
     */
    Duration duration(Duration fallback, boolean zeroAllowed) throws DefinitionException {
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
        long days = MAX_DURATION.toDays();
        errorIf(value.abs().compareTo(MAX_DURATION) > 0,
                text + " is longer than the longest duration allowed, " + days + " days (P" + days + "D)");
        errorIf(value.getNano() % 1_000_000 != 0, text + " is not a whole number of milliseconds");
        errorIf(value.isNegative() || !zeroAllowed && value.isZero(),
                zeroAllowed ? "must not be negative" : "must be a positive duration");
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
        String notPointer = "'" + text + "' is not a JSON Pointer: ";
        errorIf(!text.startsWith("/"), notPointer + "it must start with '/' (for example /exposure/household)");
        errorIf(BAD_ESCAPE.matcher(text).find(), notPointer + "'~' must be followed by 0 or 1");
        try {
            return JsonPointer.compile(text);
        } catch (IllegalArgumentException e) {
            throw error(notPointer + e.getMessage());
        }
    }

    private String describe() {
        return !present() ? "nothing" : node.isObject() ? "a mapping" : node.isArray() ? "a list"
                : "'" + node.asText() + "'";
    }
}
