package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.databind.JsonNode;
import java.util.List;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.CodingOutcome;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.OutcomeSpec;
import org.oddswatch.ingest.definition.TermSpec;

/**
 * Test oracle: the tree decoder as it was before the streaming scanner (copied unchanged from
 * EventDecoder at commit c5e8c37) so that new decoding can be compared with the old one, with the
 * rules added since written in its own terms: a value of a numeric term that is not a finite number
 * is taken as missing; an id or split value that is a non-finite number or text with an unpaired
 * surrogate is bad-id.
 * Reads one monitor's view of a parsed event: id, time, outcome and split value by JSON Pointer,
 * then the term values, coded by the monitor's {@link DesignCoder}. Checks run in this order and the
 * first failure decides the reason: id, time, outcome (missing-field, bad-id, bad-time, bad-outcome),
 * split value, then terms (unknown-level, bad-value). A term value that is absent, null or empty text
 * (or an undeclared level under {@code undeclared: missing}) is not a rejection: the event is accepted
 * with a null row. Thread-safe after construction.
 */
final class LegacyTreeDecoder {

    private final MonitorDefinition monitor;
    private final DesignCoder coder;
    private final JsonPointer[] termFields;
    private final String[] termNames;
    private final int stratumTerm;
    private final CategoricalTerm stratumCoding;

    LegacyTreeDecoder(MonitorDefinition monitor) {
        this.monitor = monitor;
        this.coder = monitor.designCoder();
        List<TermSpec> terms = monitor.terms();
        termFields = new JsonPointer[terms.size()];
        termNames = new String[terms.size()];
        for (int t = 0; t < terms.size(); t++) {
            termFields[t] = terms.get(t).field();
            termNames[t] = terms.get(t).name();
        }
        stratumTerm = monitor.stratumTermIndex();
        stratumCoding = stratumTerm < 0 ? null : (CategoricalTerm) terms.get(stratumTerm).term();
    }

    EventDecoder.Result decode(JsonNode tree) {
        JsonPointer idField = monitor.event().id();
        JsonNode idNode = tree.at(idField);
        if (absent(idNode)) {
            return reject(RejectReason.MISSING_FIELD, "no event id at " + idField);
        }
        if (!idNode.isValueNode()) {
            return reject(RejectReason.BAD_ID, "the event id at " + idField + " must be text or a number");
        }
        String id = idNode.asText();
        if (notAnIdentifier(idNode)) {
            return reject(RejectReason.BAD_ID, "the event id at " + idField + " " + why(idNode, id));
        }

        JsonPointer timeField = monitor.event().time();
        JsonNode timeNode = tree.at(timeField);
        if (absent(timeNode)) {
            return reject(RejectReason.MISSING_FIELD, "no event time at " + timeField);
        }
        long time;
        try {
            time = EventDecoder.parseTime(timeNode); // unchanged tree-node time reading
        } catch (IllegalArgumentException e) {
            return reject(RejectReason.BAD_TIME, e.getMessage());
        }

        OutcomeSpec outcomeSpec = monitor.event().outcome();
        JsonNode outcomeNode = tree.at(outcomeSpec.field());
        if (absent(outcomeNode)) {
            return reject(RejectReason.MISSING_FIELD, "no outcome at " + outcomeSpec.field());
        }
        String outcomeText = outcomeNode.isValueNode() ? scalarText(outcomeNode) : null;
        boolean positive;
        if (outcomeText != null && outcomeSpec.positive().contains(outcomeText)) {
            positive = true;
        } else if (outcomeText != null && outcomeSpec.negative().contains(outcomeText)) {
            positive = false;
        } else {
            return reject(RejectReason.BAD_OUTCOME, "outcome " + (outcomeText == null ? "value" : "'" + outcomeText + "'")
                    + " at " + outcomeSpec.field() + " is neither positive " + outcomeSpec.positive()
                    + " nor negative " + outcomeSpec.negative());
        }

        String splitValue = null;
        if (monitor.split() != null) {
            JsonPointer splitField = monitor.split().field();
            JsonNode splitNode = tree.at(splitField);
            if (absent(splitNode)) {
                return reject(RejectReason.MISSING_FIELD, "no split value at " + splitField);
            }
            if (!splitNode.isValueNode()) {
                return reject(RejectReason.BAD_ID, "the split value at " + splitField + " must be text or a number");
            }
            splitValue = scalarText(splitNode);
            if (notAnIdentifier(splitNode)) {
                return reject(RejectReason.BAD_ID, "the split value at " + splitField + " " + why(splitNode, splitValue));
            }
        }

        Object[] raw = new Object[termFields.length];
        for (int t = 0; t < termFields.length; t++) {
            JsonNode value = tree.at(termFields[t]);
            if (value.isContainerNode()) {
                return reject(RejectReason.BAD_VALUE, termNames[t] + ": expected a single value at " + termFields[t]
                        + ", found " + (value.isArray() ? "a list" : "an object"));
            }
            raw[t] = plain(value);
        }
        double[] row = new double[coder.width()];
        CodingOutcome coding = coder.code(raw, row);
        String notNumeric = null;
        while (coding.isRejected() && coding.reason().equals(RejectReason.BAD_VALUE) && isNumeric(coding.term())) {
            if (notNumeric == null) {
                notNumeric = coding.term() + ": " + coding.detail() + " (taken as missing)";
            }
            raw[java.util.Arrays.asList(termNames).indexOf(coding.term())] = null;
            coding = coder.code(raw, row);
        }
        if (coding.isRejected()) {
            return reject(coding.reason(), coding.term() + ": " + coding.detail());
        }
        String missingDetail = coding.isOk() ? null : notNumeric != null ? notNumeric
                : coding.term() + ": " + coding.detail();
        int stratum = stratumCoding == null ? -1 : stratumCoding.levelIndex(raw[stratumTerm]);
        return new EventDecoder.Result(new DecodedEvent(id, time, positive, splitValue, coding.isOk() ? row : null, stratum,
                missingDetail), null);
    }

    private static EventDecoder.Result reject(String reason, String detail) {
        return new EventDecoder.Result(null, new Rejection(reason, detail));
    }

    private boolean isNumeric(String term) {
        for (TermSpec spec : monitor.terms()) {
            if (spec.name().equals(term)) {
                return spec.term() instanceof org.oddswatch.estimator.terms.NumericTerm;
            }
        }
        return false;
    }

    private static boolean notAnIdentifier(JsonNode node) {
        return (node.isFloatingPointNumber() && !Double.isFinite(node.doubleValue()))
                || (node.isTextual() && node.textValue().codePoints().anyMatch(c -> c >= 0xD800 && c <= 0xDFFF));
    }

    private static String why(JsonNode node, String text) {
        return node.isNumber() ? "is a number beyond the range of a double (" + text + ")"
                : "holds an unpaired UTF-16 surrogate";
    }

    private static boolean absent(JsonNode node) {
        return node.isMissingNode() || node.isNull() || (node.isTextual() && node.textValue().isEmpty());
    }

    /** The text form outcomes and split values are compared in. */
    private static String scalarText(JsonNode node) {
        if (node.isIntegralNumber()) {
            return node.bigIntegerValue().toString();
        }
        if (node.isNumber()) {
            double value = node.doubleValue();
            return value == Math.rint(value) && Math.abs(value) < 1e15 ? Long.toString((long) value) : node.asText();
        }
        return node.asText();
    }

    /** A JSON scalar as the plain Java value {@link DesignCoder#code} expects; null when absent. */
    private static Object plain(JsonNode node) {
        if (node.isMissingNode() || node.isNull()) {
            return null;
        }
        if (node.isTextual()) {
            String text = node.textValue();
            return text.isEmpty() ? null : text;
        }
        if (node.isBoolean()) {
            return node.booleanValue();
        }
        if (node.isIntegralNumber() && node.canConvertToLong()) {
            return node.longValue();
        }
        return node.doubleValue();
    }
}
