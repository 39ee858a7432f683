package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.databind.JsonNode;
import java.time.DateTimeException;
import java.util.List;
import java.util.regex.Pattern;
import java.util.stream.IntStream;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.CodingOutcome;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.OutcomeSpec;
import org.oddswatch.ingest.definition.TermSpec;

/**
 * One monitor's view of a record tree ({@link RecordParser}, or a CSV row): id, time, outcome and
 * split value by JSON Pointer, then the term values coded by the monitor's {@link DesignCoder}. The
 * first failing check, in that order, decides the reason (ingest/README.md, "Reason codes"). Absent
 * means a missing member, {@code null} or empty text. An absent or unusable term value leaves the
 * event accepted without a design row, the reason in its missing detail. Outcomes and split values
 * compare in text form: a whole number below 10<sup>15</sup> as its digits ({@code 1.0} is
 * {@code "1"}); an id keeps its digits as parsed ({@code 1.50} is not {@code 1.5}). Thread-safe.
 */
public final class EventDecoder {

    private static final Pattern EPOCH_MILLIS = Pattern.compile("-?\\p{Nd}+");

    private final DesignCoder coder;
    private final JsonPointer idField;
    private final JsonPointer timeField;
    private final OutcomeSpec outcome;
    /** The split field, or null without a split. */
    private final JsonPointer splitField;
    private final List<TermSpec> terms;
    private final int stratumTerm;

    public EventDecoder(MonitorDefinition monitor) {
        this.coder = monitor.designCoder();
        this.idField = monitor.event().id();
        this.timeField = monitor.event().time();
        this.outcome = monitor.event().outcome();
        this.splitField = monitor.split() == null ? null : monitor.split().field();
        this.terms = monitor.terms();
        this.stratumTerm = monitor.stratumTermIndex();
    }

    public DesignCoder coder() {
        return coder;
    }

    /** Decodes one record (a JSON object). */
    public Decoding decode(JsonNode tree) {
        try {
            String id = identifier(tree, idField, "event id", false);
            long time;
            try {
                time = parseTime(present(tree.at(timeField), "event time", timeField));
            } catch (IllegalArgumentException e) {
                throw new UnreadableRecordException(RejectReason.BAD_TIME, e.getMessage());
            }
            boolean positive = positive(present(tree.at(outcome.field()), "outcome", outcome.field()));
            String splitValue = splitField == null ? null : identifier(tree, splitField, "split value", true);
            return new Decoding(decodeTerms(tree, id, time, positive, splitValue), null);
        } catch (UnreadableRecordException e) {
            return new Decoding(null, e.rejection());
        }
    }

    /** The event id or split value at {@code field}, as text ({@code compared}: in compared form). */
    private static String identifier(JsonNode tree, JsonPointer field, String what, boolean compared)
            throws UnreadableRecordException {
        JsonNode node = present(tree.at(field), what, field);
        String text = node.isValueNode() ? compared ? scalarText(node) : node.asText() : null;
        String problem = text == null ? "must be text or a number"
                : node.isNumber() && !Double.isFinite(node.doubleValue())
                ? "is a number beyond the range of a double (" + text + ")"
                : node.isTextual() && Unicode.hasUnpairedSurrogate(text)
                ? "holds an unpaired UTF-16 surrogate" // no UTF-8 form: no output could show it
                : null;
        if (problem != null) {
            throw new UnreadableRecordException(RejectReason.BAD_ID, "the " + what + " at " + field + " " + problem);
        }
        return text;
    }

    private boolean positive(JsonNode node) throws UnreadableRecordException {
        String text = node.isValueNode() ? scalarText(node) : null;
        if (text != null && (outcome.positive().contains(text) || outcome.negative().contains(text))) {
            return outcome.positive().contains(text);
        }
        throw new UnreadableRecordException(RejectReason.BAD_OUTCOME, "outcome "
                + (text == null ? "value" : "'" + text + "'") + " at " + outcome.field()
                + " is neither positive " + outcome.positive() + " nor negative " + outcome.negative());
    }

    private DecodedEvent decodeTerms(JsonNode tree, String id, long time, boolean positive, String splitValue)
            throws UnreadableRecordException {
        Object[] raw = new Object[terms.size()];
        long absentTerms = 0;
        for (int t = 0; t < raw.length; t++) {
            JsonNode value = tree.at(terms.get(t).field());
            if (value.isContainerNode()) {
                throw new UnreadableRecordException(RejectReason.BAD_VALUE, terms.get(t).name()
                        + ": expected a single value at " + terms.get(t).field() + ", found "
                        + (value.isArray() ? "a list" : "an object"));
            }
            raw[t] = plain(value);
            if (raw[t] == null && t < Long.SIZE) {
                absentTerms |= 1L << t;
            }
        }
        double[] row = new double[coder.width()];
        CodingOutcome coding = coder.code(raw, row);
        String notNumeric = null;
        for (int term; coding.isRejected() && (term = numericTerm(coding)) >= 0; coding = coder.code(raw, row)) {
            // not a finite number: missing, like an absent value
            if (notNumeric == null) {
                notNumeric = coding.term() + ": " + coding.detail() + " (taken as missing)";
            }
            raw[term] = null;
        }
        if (coding.isRejected()) {
            throw new UnreadableRecordException(coding.reason(), coding.term() + ": " + coding.detail());
        }
        String missingDetail = coding.isOk() ? null : notNumeric != null ? notNumeric
                : coding.term() + ": " + coding.detail();
        int stratum = stratumTerm < 0 ? -1
                : ((CategoricalTerm) terms.get(stratumTerm).term()).levelIndex(raw[stratumTerm]);
        return new DecodedEvent(id, time, positive, splitValue, coding.isOk() ? row : null, stratum, missingDetail,
                absentTerms);
    }

    /** The index of the numeric term whose value {@code coding} rejected as not a number, or -1. */
    private int numericTerm(CodingOutcome coding) {
        return !RejectReason.BAD_VALUE.equals(coding.reason()) ? -1 : IntStream.range(0, terms.size())
                .filter(t -> terms.get(t).term() instanceof NumericTerm && terms.get(t).name().equals(coding.term()))
                .findFirst().orElse(-1);
    }

    /** {@code node}, unless absent: a missing member, {@code null} or empty text. */
    private static JsonNode present(JsonNode node, String what, JsonPointer field) throws UnreadableRecordException {
        if (node.isMissingNode() || node.isNull() || node.isTextual() && node.textValue().isEmpty()) {
            throw new UnreadableRecordException(RejectReason.MISSING_FIELD, "no " + what + " at " + field);
        }
        return node;
    }

    /**
     * Event time in epoch milliseconds: RFC 3339 text with an offset ({@code t} and {@code z} in
     * either case, fractions below a millisecond dropped), or whole epoch milliseconds as a number or
     * a string of digits. Space around text is ignored.
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
        if (EPOCH_MILLIS.matcher(trimmed).matches()) {
            try {
                return Long.parseLong(trimmed);
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException("time " + trimmed + " is out of range");
            }
        }
        try {
            return Rfc3339.toEpochMillis(trimmed);
        } catch (DateTimeException | ArithmeticException e) {
            throw new IllegalArgumentException("'" + text + "' is not an RFC 3339 time with an offset"
                    + " (for example 2026-02-03T09:30:00Z) or epoch milliseconds");
        }
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
        if (node.isMissingNode() || node.isNull() || node.isTextual() && node.textValue().isEmpty()) {
            return null;
        }
        return node.isTextual() ? node.textValue() : node.isBoolean() ? (Object) node.booleanValue()
                : node.isIntegralNumber() && node.canConvertToLong() ? (Object) node.longValue() : node.doubleValue();
    }
}
