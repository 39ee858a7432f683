package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.databind.JsonNode;
import java.time.format.DateTimeParseException;
import java.util.List;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.CodingOutcome;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.OutcomeSpec;
import org.oddswatch.ingest.definition.TermSpec;

/**
 * Reads one monitor's view of a record parsed into a tree ({@link RecordParser}, or a CSV row): id,
 * time, outcome and split value by JSON Pointer ({@link JsonNode#at}), then the term values, coded by
 * the monitor's {@link DesignCoder}. Checks run in this order and the first failure decides the
 * reason: id, time, outcome (missing-field, bad-id, bad-time, bad-outcome), split value, then terms
 * (unknown-level, bad-value).
 *
 * <p>Special cases:
 * <ul>
 *   <li>absent means a missing member, {@code null} or empty text;</li>
 *   <li>a term value that is absent (or an undeclared level under {@code undeclared: missing}, or a
 *       value of a numeric term that is not a finite number) is not a rejection: the event is
 *       accepted with a null row and the reason in its missing detail;</li>
 *   <li>a numeric id keeps its digits as the parser read them ({@code 1.50} is not {@code 1.5};
 *       whole numbers are compared by value, so {@code -0} is {@code 0});</li>
 *   <li>an id or split value that is an object or array, a number beyond the range of a double
 *       ({@code 1e400}), or text holding an unpaired surrogate is {@code bad-id};</li>
 *   <li>outcomes and split values are compared in text form: a whole number below 10<sup>15</sup>
 *       as its digits ({@code 1.0} is {@code "1"}), {@code true}/{@code false} for booleans.</li>
 * </ul>
 * Thread-safe after construction.
 */
public final class EventDecoder {

    private final DesignCoder coder;
    private final JsonPointer idField;
    private final JsonPointer timeField;
    private final OutcomeSpec outcome;
    /** The split field, or null without a split. */
    private final JsonPointer splitField;
    private final JsonPointer[] termFields;
    private final String[] termNames;
    /** Per term: true for a numeric term (a value that is not a number is taken as missing). */
    private final boolean[] numeric;
    private final int stratumTerm;
    private final CategoricalTerm stratumCoding;

    public EventDecoder(MonitorDefinition monitor) {
        this.coder = monitor.designCoder();
        this.idField = monitor.event().id();
        this.timeField = monitor.event().time();
        this.outcome = monitor.event().outcome();
        this.splitField = monitor.split() == null ? null : monitor.split().field();
        List<TermSpec> terms = monitor.terms();
        termFields = new JsonPointer[terms.size()];
        termNames = new String[terms.size()];
        numeric = new boolean[terms.size()];
        for (int t = 0; t < terms.size(); t++) {
            termFields[t] = terms.get(t).field();
            termNames[t] = terms.get(t).name();
            numeric[t] = terms.get(t).term() instanceof NumericTerm;
        }
        stratumTerm = monitor.stratumTermIndex();
        stratumCoding = stratumTerm < 0 ? null : (CategoricalTerm) terms.get(stratumTerm).term();
    }

    public DesignCoder coder() {
        return coder;
    }

    /** Decodes one record (a JSON object). */
    public Decoding decode(JsonNode tree) {
        JsonNode idNode = tree.at(idField);
        if (absent(idNode)) {
            return Decoding.rejected(RejectReason.MISSING_FIELD, "no event id at " + idField);
        }
        if (!idNode.isValueNode()) {
            return Decoding.rejected(RejectReason.BAD_ID, "the event id at " + idField + " must be text or a number");
        }
        String id = idNode.asText();
        String badId = notAnIdentifier(idNode, id);
        if (badId != null) {
            return Decoding.rejected(RejectReason.BAD_ID, "the event id at " + idField + " " + badId);
        }

        JsonNode timeNode = tree.at(timeField);
        if (absent(timeNode)) {
            return Decoding.rejected(RejectReason.MISSING_FIELD, "no event time at " + timeField);
        }
        long time;
        try {
            time = parseTime(timeNode);
        } catch (IllegalArgumentException e) {
            return Decoding.rejected(RejectReason.BAD_TIME, e.getMessage());
        }

        JsonNode outcomeNode = tree.at(outcome.field());
        if (absent(outcomeNode)) {
            return Decoding.rejected(RejectReason.MISSING_FIELD, "no outcome at " + outcome.field());
        }
        String outcomeText = outcomeNode.isValueNode() ? scalarText(outcomeNode) : null;
        boolean positive;
        if (outcomeText != null && outcome.positive().contains(outcomeText)) {
            positive = true;
        } else if (outcomeText != null && outcome.negative().contains(outcomeText)) {
            positive = false;
        } else {
            return Decoding.rejected(RejectReason.BAD_OUTCOME, "outcome "
                    + (outcomeText == null ? "value" : "'" + outcomeText + "'") + " at " + outcome.field()
                    + " is neither positive " + outcome.positive() + " nor negative " + outcome.negative());
        }

        String splitValue = null;
        if (splitField != null) {
            JsonNode splitNode = tree.at(splitField);
            if (absent(splitNode)) {
                return Decoding.rejected(RejectReason.MISSING_FIELD, "no split value at " + splitField);
            }
            if (!splitNode.isValueNode()) {
                return Decoding.rejected(RejectReason.BAD_ID, "the split value at " + splitField
                        + " must be text or a number");
            }
            splitValue = scalarText(splitNode);
            String badSplit = notAnIdentifier(splitNode, splitValue);
            if (badSplit != null) {
                return Decoding.rejected(RejectReason.BAD_ID, "the split value at " + splitField + " " + badSplit);
            }
        }
        return decodeTerms(tree, id, time, positive, splitValue);
    }

    private Decoding decodeTerms(JsonNode tree, String id, long time, boolean positive, String splitValue) {
        Object[] raw = new Object[termFields.length];
        long absentTerms = 0;
        for (int t = 0; t < termFields.length; t++) {
            JsonNode value = tree.at(termFields[t]);
            if (value.isContainerNode()) {
                return Decoding.rejected(RejectReason.BAD_VALUE, termNames[t] + ": expected a single value at "
                        + termFields[t] + ", found " + (value.isArray() ? "a list" : "an object"));
            }
            raw[t] = plain(value);
            if (raw[t] == null && t < Long.SIZE) {
                absentTerms |= 1L << t;
            }
        }
        double[] row = new double[coder.width()];
        CodingOutcome coding = coder.code(raw, row);
        String notNumeric = null;
        int term;
        while (coding.isRejected() && (term = numericTerm(coding)) >= 0) {
            // A value of a numeric term that is not a finite number is treated as missing: the
            // event counts for prevalence and is left out of the fit, like an absent value.
            if (notNumeric == null) {
                notNumeric = coding.term() + ": " + coding.detail() + " (taken as missing)";
            }
            raw[term] = null;
            coding = coder.code(raw, row);
        }
        if (coding.isRejected()) {
            return Decoding.rejected(coding.reason(), coding.term() + ": " + coding.detail());
        }
        String missingDetail = coding.isOk() ? null : notNumeric != null ? notNumeric
                : coding.term() + ": " + coding.detail();
        int stratum = stratumCoding == null ? -1 : stratumCoding.levelIndex(raw[stratumTerm]);
        return Decoding.of(new DecodedEvent(id, time, positive, splitValue, coding.isOk() ? row : null, stratum,
                missingDetail, absentTerms));
    }

    /** The index of the numeric term whose value {@code coding} rejected as not a number, or -1. */
    private int numericTerm(CodingOutcome coding) {
        if (!RejectReason.BAD_VALUE.equals(coding.reason())) {
            return -1;
        }
        for (int t = 0; t < termNames.length; t++) {
            if (numeric[t] && termNames[t].equals(coding.term())) {
                return t;
            }
        }
        return -1;
    }

    /**
     * Why a scalar cannot identify an event or a stream, or null when it can: a number beyond the
     * range of a double, or text holding an unpaired surrogate (such as U+D800 escaped alone in
     * JSON: it has no UTF-8 form, so it could not be written to any output).
     */
    private static String notAnIdentifier(JsonNode node, String text) {
        if (node.isNumber() && !Double.isFinite(node.doubleValue())) {
            return "is a number beyond the range of a double (" + text + ")";
        }
        if (node.isTextual() && Unicode.hasUnpairedSurrogate(text)) {
            return "holds an unpaired UTF-16 surrogate";
        }
        return null;
    }

    private static boolean absent(JsonNode node) {
        return node.isMissingNode() || node.isNull() || (node.isTextual() && node.textValue().isEmpty());
    }

    /**
     * Event time in epoch milliseconds: RFC 3339 text with an offset, or whole epoch milliseconds as a
     * number or a string of digits (space around the text is ignored).
     *
     * @throws IllegalArgumentException with a readable message otherwise
     */
    public static long parseTime(JsonNode node) {
        if (node.isIntegralNumber()) {
            if (!node.canConvertToLong()) {
                throw new IllegalArgumentException("time " + node.asText() + " is out of range");
            }
            return node.longValue();
        }
        if (node.isNumber()) {
            double value = node.doubleValue();
            if (value == Math.rint(value) && Math.abs(value) < 9.0e15) {
                return (long) value;
            }
            throw new IllegalArgumentException("time " + node.asText() + " is not whole epoch milliseconds");
        }
        if (!node.isTextual()) {
            throw new IllegalArgumentException("time must be RFC 3339 text or epoch milliseconds");
        }
        String text = node.textValue();
        String trimmed = text.trim();
        if (isDigits(trimmed)) {
            try {
                return Long.parseLong(trimmed);
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException("time " + trimmed + " is out of range");
            }
        }
        try {
            return Rfc3339.toEpochMillis(trimmed);
        } catch (DateTimeParseException | ArithmeticException e) {
            throw new IllegalArgumentException("'" + text + "' is not an RFC 3339 time with an offset"
                    + " (for example 2026-02-03T09:30:00Z) or epoch milliseconds");
        }
    }

    private static boolean isDigits(String text) {
        int start = text.startsWith("-") ? 1 : 0;
        if (text.length() == start) {
            return false;
        }
        for (int i = start; i < text.length(); i++) {
            if (!Character.isDigit(text.charAt(i))) {
                return false;
            }
        }
        return true;
    }

    /** The text form outcomes and split values are compared in. */
    private static String scalarText(JsonNode node) {
        if (node.isNumber() && !node.isIntegralNumber()) {
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
