package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.MissingNode;
import java.time.Duration;
import java.time.Instant;
import java.time.OffsetDateTime;
import java.time.format.DateTimeFormatter;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;

/**
 * One place in a definition tree with typed, located accessors: every accessor that finds a wrong
 * value throws a {@link DefinitionException} naming this node's file, line and key.
 */
final class DefNode {

    private final LocatedTree tree;
    private final JsonNode node;
    private final String path;

    DefNode(LocatedTree tree, JsonNode node, String path) {
        this.tree = tree;
        this.node = node;
        this.path = path;
    }

    static DefNode root(LocatedTree tree) {
        return new DefNode(tree, tree.root(), "");
    }

    String path() {
        return path;
    }

    JsonNode json() {
        return node;
    }

    LocatedTree tree() {
        return tree;
    }

    /** Whether the key exists and is not null. */
    boolean present() {
        return !node.isMissingNode() && !node.isNull();
    }

    DefNode get(String name) {
        String childPath = path.isEmpty() ? name : path + "." + name;
        JsonNode child = node.isObject() ? node.get(name) : null;
        return new DefNode(tree, child == null ? MissingNode.getInstance() : child, childPath);
    }

    /** The child, which must be present. */
    DefNode require(String name) throws DefinitionException {
        DefNode child = get(name);
        if (!child.present()) {
            throw error("missing required key '" + name + "'");
        }
        return child;
    }

    DefinitionException error(String problem) {
        return tree.error(path, problem);
    }

    /** Checks that this node is a mapping with no keys outside {@code allowed}. */
    DefNode mapping(String... allowed) throws DefinitionException {
        if (!node.isObject()) {
            throw error("expected a mapping, found " + describe());
        }
        Set<String> known = new TreeSet<>(Arrays.asList(allowed));
        Iterator<String> names = node.fieldNames();
        while (names.hasNext()) {
            String name = names.next();
            if (!known.contains(name)) {
                throw get(name).error("unknown key (expected one of " + String.join(", ", known) + ")");
            }
        }
        return this;
    }

    List<DefNode> elements() throws DefinitionException {
        if (!node.isArray()) {
            throw error("expected a list, found " + describe());
        }
        List<DefNode> list = new ArrayList<>(node.size());
        for (int i = 0; i < node.size(); i++) {
            list.add(new DefNode(tree, node.get(i), path + "[" + i + "]"));
        }
        return list;
    }

    /** A scalar as text: strings as they are, numbers and booleans in their plain form. */
    String text() throws DefinitionException {
        if (!node.isValueNode() || node.isNull()) {
            throw error("expected a text value, found " + describe());
        }
        return node.isNumber() ? node.numberValue().toString() : node.asText();
    }

    String text(String fallback) throws DefinitionException {
        return present() ? text() : fallback;
    }

    /** A non-empty text value. */
    String name() throws DefinitionException {
        String text = text();
        if (text.isBlank()) {
            throw error("must not be empty");
        }
        return text;
    }

    List<String> texts() throws DefinitionException {
        List<String> values = new ArrayList<>();
        for (DefNode element : elements()) {
            values.add(element.text());
        }
        return values;
    }

    boolean bool(boolean fallback) throws DefinitionException {
        if (!present()) {
            return fallback;
        }
        if (node.isBoolean()) {
            return node.booleanValue();
        }
        String text = node.isTextual() ? node.textValue().toLowerCase(java.util.Locale.ROOT) : "";
        switch (text) {
            case "yes": case "on": case "true":
                return true;
            case "no": case "off": case "false":
                return false;
            default:
                throw error("expected true or false, found " + describe());
        }
    }

    double number() throws DefinitionException {
        if (node.isNumber()) {
            return node.doubleValue();
        }
        if (node.isTextual()) {
            try {
                return Double.parseDouble(node.textValue().trim());
            } catch (NumberFormatException e) {
                // fall through to the error below
            }
        }
        throw error("expected a number, found " + describe());
    }

    double number(double fallback) throws DefinitionException {
        return present() ? number() : fallback;
    }

    int integer(int fallback) throws DefinitionException {
        if (!present()) {
            return fallback;
        }
        double value = number();
        if (value != Math.rint(value) || Math.abs(value) > Integer.MAX_VALUE) {
            throw error("expected a whole number, found " + describe());
        }
        return (int) value;
    }

    /** The longest duration a definition may give: 3660 days (about ten years). */
    static final Duration MAX_DURATION = Duration.ofDays(3660);
    /** The earliest and latest instant a definition may give: years 1 to 9999. */
    static final Instant MIN_INSTANT = Instant.parse("0001-01-01T00:00:00Z");
    static final Instant MAX_INSTANT = Instant.parse("9999-12-31T23:59:59.999Z");

    /**
     * An ISO-8601 duration ({@code P28D}, {@code PT30S}) of whole milliseconds, at most
     * {@link #MAX_DURATION} either way (so that no arithmetic on it can overflow).
     */
    Duration duration() throws DefinitionException {
        String text = text();
        Duration value;
        try {
            value = Duration.parse(text);
        } catch (DateTimeParseException e) {
            throw error("'" + text + "' is not an ISO-8601 duration (for example P28D or PT30S)");
        }
        if (value.abs().compareTo(MAX_DURATION) > 0) {
            throw error(text + " is longer than the longest duration allowed, " + MAX_DURATION.toDays() + " days (P"
                    + MAX_DURATION.toDays() + "D)");
        }
        if (value.getNano() % 1_000_000 != 0) {
            throw error(text + " is not a whole number of milliseconds");
        }
        return value;
    }

    Duration duration(Duration fallback) throws DefinitionException {
        return present() ? duration() : fallback;
    }

    /** An RFC 3339 instant with an explicit offset. */
    Instant instant() throws DefinitionException {
        String text = text();
        try {
            Instant value = OffsetDateTime.parse(text, DateTimeFormatter.ISO_OFFSET_DATE_TIME).toInstant();
            if (value.isBefore(MIN_INSTANT) || value.isAfter(MAX_INSTANT)) {
                throw error("'" + text + "' is outside the years 1 to 9999");
            }
            return value;
        } catch (DateTimeParseException e) {
            throw error("'" + text + "' is not an RFC 3339 time (for example 2026-01-05T00:00:00Z)");
        }
    }

    /** A JSON Pointer (RFC 6901): empty, or '/'-separated tokens with ~0 and ~1 escapes only. */
    JsonPointer pointer() throws DefinitionException {
        String text = text();
        if (text.isEmpty() || text.charAt(0) != '/') {
            throw error("'" + text + "' is not a JSON Pointer: it must start with '/' (for example /exposure/household)");
        }
        for (int i = 0; i < text.length(); i++) {
            if (text.charAt(i) == '~') {
                char next = i + 1 < text.length() ? text.charAt(i + 1) : ' ';
                if (next != '0' && next != '1') {
                    throw error("'" + text + "' is not a JSON Pointer: '~' must be followed by 0 or 1");
                }
            }
        }
        try {
            return JsonPointer.compile(text);
        } catch (IllegalArgumentException e) {
            throw error("'" + text + "' is not a JSON Pointer: " + e.getMessage());
        }
    }

    private String describe() {
        if (node.isMissingNode() || node.isNull()) {
            return "nothing";
        }
        if (node.isObject()) {
            return "a mapping";
        }
        if (node.isArray()) {
            return "a list";
        }
        return "'" + node.asText() + "'";
    }
}
