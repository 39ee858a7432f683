package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.json.Json;

/**
 * Reads the {@code rules} section of a monitor: which rules run, their settings bound into
 * {@link AlertRulesConfig} (errors name file, line and key in the definition's words), and the terms
 * the settings name.
 */
final class RulesReader {

    /** Rule sections that run with their defaults unless switched off. */
    private static final List<String> DEFAULT_ON = List.of("oddsRatioDrift", "calibration", "cusum");
    private static final List<String> SECTIONS = List.of("oddsRatioDrift", "oddsRatioBounds", "calibration", "cusum");

    private RulesReader() {
    }

    /**
     * Binds {@code rules} into the alert engine's settings (unknown keys are errors), and checks that
     * every {@code term}/{@code terms} value in it names a declared, watched term.
     */
    static AlertRulesConfig read(DefNode node, List<TermSpec> terms, List<String> notices)
            throws DefinitionException {
        if (!node.present()) {
            return AlertRulesConfig.defaults();
        }
        JsonNode json = node.json();
        if (!json.isObject()) {
            throw node.error("expected a mapping of rule settings");
        }
        checkTermReferences(node, terms);
        ObjectNode bound = switchedOn(node, notices);
        try {
            return Json.mapper().readerFor(AlertRulesConfig.class)
                    .with(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
                    .without(DeserializationFeature.ACCEPT_FLOAT_AS_INT)
                    .readValue(bound);
        } catch (JsonMappingException e) {
            StringBuilder path = new StringBuilder(node.path());
            for (JsonMappingException.Reference ref : e.getPath()) {
                if (ref.getFieldName() != null) {
                    path.append('.').append(ref.getFieldName());
                } else if (ref.getIndex() >= 0) {
                    path.append('[').append(ref.getIndex()).append(']');
                }
            }
            throw node.tree().error(path.toString(), ruleProblem(e, json.at(pointer(e))));
        } catch (IOException e) {
            throw node.error(e.getMessage());
        }
    }

    /** The JSON Pointer (from the root) of the value a mapping error is about. */
    private static String pointer(JsonMappingException e) {
        StringBuilder pointer = new StringBuilder();
        for (JsonMappingException.Reference ref : e.getPath()) {
            pointer.append('/').append(ref.getFieldName() != null
                    ? ref.getFieldName().replace("~", "~0").replace("/", "~1") : Integer.toString(ref.getIndex()));
        }
        return pointer.toString();
    }

    /**
     * A rule-binding error in the definition's words: what was expected and found, or the rule's
     * own message, never a Java type name.
     */
    private static String ruleProblem(JsonMappingException e, JsonNode relative) {
        if (e instanceof com.fasterxml.jackson.databind.exc.UnrecognizedPropertyException) {
            return "unknown rule setting";
        }
        if (e instanceof com.fasterxml.jackson.databind.exc.ValueInstantiationException && e.getCause() != null) {
            return String.valueOf(e.getCause().getMessage());
        }
        Class<?> target = e instanceof com.fasterxml.jackson.databind.exc.MismatchedInputException m
                ? m.getTargetType()
                : e.getCause() instanceof com.fasterxml.jackson.core.exc.InputCoercionException c ? c.getTargetType() : null;
        String expected;
        if (target == null) {
            expected = "a valid value";
        } else if (target == int.class || target == Integer.class || target == long.class || target == Long.class) {
            expected = "a whole number within the range of an int";
        } else if (Number.class.isAssignableFrom(target) || target.isPrimitive() && target != boolean.class) {
            expected = "a number";
        } else if (target == boolean.class || target == Boolean.class) {
            expected = "true or false";
        } else if (target == String.class) {
            expected = "a text value";
        } else if (java.util.Collection.class.isAssignableFrom(target) || target.isArray()) {
            expected = "a list";
        } else {
            expected = "a mapping of settings";
        }
        return "expected " + expected + ", found " + found(relative);
    }

    private static String found(JsonNode value) {
        if (value == null || value.isMissingNode()) {
            return "a value that does not fit";
        }
        if (value.isObject()) {
            return "a mapping";
        }
        if (value.isArray()) {
            return "a list";
        }
        return value.isNull() ? "nothing" : "'" + value.asText() + "'";
    }

    /**
     * Which rules run: every rule with defaults (drift, calibration, CUSUM) runs unless its section
     * says {@code enabled: false}; the bounds rule runs when its section is there (it has no
     * defaults) and not switched off. Returns the mapping to bind: sections switched off removed,
     * unlisted default rules added as empty sections, {@code enabled} keys dropped. Definitions
     * written when an unlisted section meant "off" now run that rule: each such section gets a
     * notice saying so and how to keep it off.
     */
    private static ObjectNode switchedOn(DefNode node, List<String> notices) throws DefinitionException {
        ObjectNode bound = ((ObjectNode) node.json()).deepCopy();
        for (String section : SECTIONS) {
            DefNode child = node.get(section);
            if (!child.present()) {
                if (DEFAULT_ON.contains(section)) {
                    bound.putObject(section);
                    notices.add(node.path() + "." + section + " is not listed, so it runs with its defaults (until "
                            + "this version an unlisted rule was off); write '" + section
                            + ": {enabled: false}' to switch it off");
                }
                continue;
            }
            if (!child.json().isObject()) {
                continue; // the binding names the key and the problem
            }
            DefNode enabled = child.get("enabled");
            if (enabled.present()) {
                ObjectNode settings = (ObjectNode) bound.get(section);
                settings.remove("enabled");
                if (!enabled.bool(true)) {
                    bound.remove(section);
                }
            }
        }
        return bound;
    }

    private static void checkTermReferences(DefNode node, List<TermSpec> terms) throws DefinitionException {
        JsonNode json = node.json();
        if (json.isObject()) {
            for (Map.Entry<String, JsonNode> field : json.properties()) {
                DefNode child = node.get(field.getKey());
                if (field.getKey().equals("term") && field.getValue().isTextual()) {
                    checkWatched(child, child.text(), terms);
                } else if (field.getKey().equals("terms") && field.getValue().isArray()) {
                    for (DefNode element : child.elements()) {
                        if (element.json().isTextual()) {
                            checkWatched(element, element.text(), terms);
                        } else {
                            checkTermReferences(element, terms);
                        }
                    }
                } else {
                    checkTermReferences(child, terms);
                }
            }
        } else if (json.isArray()) {
            for (DefNode element : node.elements()) {
                checkTermReferences(element, terms);
            }
        }
    }

    private static void checkWatched(DefNode where, String name, List<TermSpec> terms) throws DefinitionException {
        for (TermSpec spec : terms) {
            if (spec.name().equals(name)) {
                if (!spec.term().watched()) {
                    throw where.error("term '" + name + "' is not watched (set watched: true on it)");
                }
                return;
            }
        }
        throw where.error("'" + name + "' is not a declared term");
    }
}
