package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.exc.InputCoercionException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.exc.MismatchedInputException;
import com.fasterxml.jackson.databind.exc.UnrecognizedPropertyException;
import com.fasterxml.jackson.databind.exc.ValueInstantiationException;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.util.Collection;
import java.util.List;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.json.Json;

/**
 * Reads the {@code rules} section of a monitor into {@link AlertRulesConfig}: which rules run, their
 * settings (unknown keys are errors, worded in the definition's terms, never a Java type name), and
 * that every {@code term}/{@code terms} value names a declared, watched term.
 */
final class RulesReader {

    /** Rule sections that run with their defaults unless switched off. */
    private static final List<String> DEFAULT_ON = List.of("calibration", "cusum", "oddsRatioCusum");
    /** Default rules that an unlisted section once switched off: only these get a notice when unlisted. */
    private static final List<String> ONCE_OFF_WHEN_UNLISTED = List.of("calibration", "cusum");
    /** The window z-rule: on by default in earlier versions, now only when listed. */
    private static final String RETIRED_DEFAULT = "oddsRatioDrift";
    private static final List<String> SECTIONS = List.of("oddsRatioDrift", "oddsRatioBounds", "calibration", "cusum",
            "oddsRatioCusum");

    private RulesReader() {
    }

    static AlertRulesConfig read(DefNode node, List<TermSpec> terms, List<String> notices)
            throws DefinitionException {
        if (!node.present()) {
            return AlertRulesConfig.defaults();
        }
        node.errorIf(!node.json().isObject(), "expected a mapping of rule settings");
        checkTermReferences(node, "", terms);
        ObjectNode bound = switchedOn(node, notices);
        try {
            return Json.mapper().readerFor(AlertRulesConfig.class)
                    .with(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
                    .without(DeserializationFeature.ACCEPT_FLOAT_AS_INT)
                    .readValue(bound);
        } catch (JsonMappingException e) {
            StringBuilder path = new StringBuilder(node.path());
            JsonNode value = node.json();
            for (JsonMappingException.Reference ref : e.getPath()) {
                if (ref.getFieldName() != null) {
                    path.append('.').append(ref.getFieldName());
                    value = value.path(ref.getFieldName());
                } else {
                    path.append(ref.getIndex() >= 0 ? "[" + ref.getIndex() + "]" : "");
                    value = value.path(ref.getIndex());
                }
            }
            throw node.errorAt(path.toString(), ruleProblem(e, value));
        } catch (IOException e) {
            throw node.error(e.getMessage());
        }
    }

    /** A binding error in the definition's words: what was expected and found, or the rule's own message. */
    private static String ruleProblem(JsonMappingException e, JsonNode value) {
        if (e instanceof UnrecognizedPropertyException) {
            return "unknown rule setting";
        }
        if (e instanceof ValueInstantiationException && e.getCause() != null) {
            return String.valueOf(e.getCause().getMessage());
        }
        Class<?> target = e instanceof MismatchedInputException m ? m.getTargetType()
                : e.getCause() instanceof InputCoercionException c ? c.getTargetType() : null;
        String expected = target == null ? "a valid value"
                : target == int.class || target == Integer.class || target == long.class || target == Long.class
                ? "a whole number within the range of an int"
                : Number.class.isAssignableFrom(target) || target.isPrimitive() && target != boolean.class ? "a number"
                : target == boolean.class || target == Boolean.class ? "true or false"
                : target == String.class ? "a text value"
                : Collection.class.isAssignableFrom(target) || target.isArray() ? "a list" : "a mapping of settings";
        return "expected " + expected + ", found " + (value.isMissingNode() ? "a value that does not fit"
                : value.isObject() ? "a mapping" : value.isArray() ? "a list" : value.isNull() ? "nothing"
                : "'" + value.asText() + "'");
    }

    /**
     * The mapping to bind: every rule with defaults (calibration, both CUSUMs) runs unless its
     * section says {@code enabled: false}; the bounds rule (no defaults) and the window z-rule
     * ({@code oddsRatioDrift}, a default in earlier versions, noticed when unlisted) run when their
     * section is there and not switched off. Sections switched off are removed, unlisted default rules added
     * empty (each with a notice: an unlisted rule was once off), {@code enabled} keys dropped.
     */
    private static ObjectNode switchedOn(DefNode node, List<String> notices) throws DefinitionException {
        ObjectNode bound = ((ObjectNode) node.json()).deepCopy();
        for (String section : SECTIONS) {
            DefNode child = node.get(section);
            if (!child.present() && section.equals(RETIRED_DEFAULT)) {
                notices.add(node.path() + "." + section + " is not listed, so it does not run (until this version it"
                        + " ran by default; the step CUSUM oddsRatioCusum watches the odds ratios); write '" + section
                        + ": {}' to run it");
            } else if (!child.present() && DEFAULT_ON.contains(section)) {
                bound.putObject(section);
                if (ONCE_OFF_WHEN_UNLISTED.contains(section)) {
                    notices.add(node.path() + "." + section + " is not listed, so it runs with its defaults (until "
                            + "this version an unlisted rule was off); write '" + section
                            + ": {enabled: false}' to switch it off");
                }
            } else if (child.json().isObject() && child.get("enabled").present()) {
                // a section that is not a mapping is left to the binding, which names the problem
                ((ObjectNode) bound.get(section)).remove("enabled");
                if (!child.get("enabled").bool(true)) {
                    bound.remove(section);
                }
            }
        }
        return bound;
    }

    /** Checks that every text value under a key {@code term}, or listed under {@code terms}, names a watched term. */
    private static void checkTermReferences(DefNode node, String key, List<TermSpec> terms)
            throws DefinitionException {
        if (node.json().isTextual() && (key.equals("term") || key.equals("terms[]"))) {
            String name = node.text();
            TermSpec spec = terms.stream().filter(t -> t.name().equals(name)).findFirst()
                    .orElseThrow(() -> node.error("'" + name + "' is not a declared term"));
            node.errorIf(!spec.term().watched(), "term '" + name + "' is not watched (set watched: true on it)");
        } else if (node.json().isArray()) {
            for (DefNode element : node.elements()) {
                checkTermReferences(element, key.equals("terms") ? "terms[]" : "", terms);
            }
        } else if (node.json().isObject()) {
            for (String name : (Iterable<String>) node.json()::fieldNames) {
                checkTermReferences(node.get(name), name, terms);
            }
        }
    }
}
