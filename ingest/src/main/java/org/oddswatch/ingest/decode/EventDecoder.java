package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.databind.JsonNode;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.List;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.CodingOutcome;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.OutcomeSpec;
import org.oddswatch.ingest.definition.TermSpec;

/**
 * Reads one monitor's view of a parsed event: id, time, outcome and split value by JSON Pointer,
 * then the term values, coded by the monitor's {@link DesignCoder}. Checks run in this order and the
 * first failure decides the reason: id, time, outcome (missing-field, bad-id, bad-time, bad-outcome),
 * split value, then terms (unknown-level, bad-value). A term value that is absent, null or empty text
 * (or an undeclared level under {@code undeclared: missing}, or a value of a numeric term that is not
 * a finite number) is not a rejection: the event is accepted with a null row. A numeric id keeps the
 * text the record wrote when the scanner reads it ({@code -0} is not {@code 0}, {@code 1e400} not
 * {@code 7e400}); an id or split value that is a non-finite number, or text with an unpaired
 * surrogate, is {@code bad-id}. The fields come either from a tree ({@link #decode(JsonNode)}: {@link JsonNode#at}) or
 * from one streaming pass of a {@link RecordScanner} ({@link #decode(EventRecord)}); both give the same
 * result. Thread-safe after construction.
 */
public final class EventDecoder {

    private static final int ID = 0;
    private static final int TIME = 1;
    private static final int OUTCOME = 2;
    private static final int SPLIT = 3;

    private final MonitorDefinition monitor;
    private final DesignCoder coder;
    /** Every field read, in {@link #fieldsRead} order; the terms start at {@link #firstTerm}. */
    private final JsonPointer[] fields;
    private final int[] identity;
    private final boolean hasSplit;
    private final int firstTerm;
    private final JsonPointer[] termFields;
    private final String[] termNames;
    /** Per term: true for a numeric term (a value that is not a number is taken as missing). */
    private final boolean[] numeric;
    private final int stratumTerm;
    private final CategoricalTerm stratumCoding;

    public EventDecoder(MonitorDefinition monitor) {
        this.monitor = monitor;
        this.coder = monitor.designCoder();
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
        fields = fieldsRead(monitor).toArray(new JsonPointer[0]);
        identity = java.util.stream.IntStream.range(0, fields.length).toArray();
        hasSplit = monitor.split() != null;
        firstTerm = hasSplit ? SPLIT + 1 : SPLIT;
    }

    public MonitorDefinition monitor() {
        return monitor;
    }

    public DesignCoder coder() {
        return coder;
    }

    /** The result of decoding: an event, or a rejection. */
    public record Result(DecodedEvent event, Rejection rejection) {
        public boolean ok() {
            return rejection == null;
        }
    }

    /** Decodes a tree (a CSV row, or a record parsed by {@link RecordParser}). */
    public Result decode(JsonNode tree) {
        FieldValues values = new FieldValues(fields.length);
        for (int f = 0; f < fields.length; f++) {
            values.setNode(f, tree.at(fields[f]));
        }
        return decode(values, identity, new Object[termFields.length]);
    }

    /**
     * Decodes a record read by a {@link RecordScanner} (built with this decoder's monitor among its
     * monitors), or given as a tree; the same record gives the same result either way. Looks the
     * fields' slots up in the record's layout on every call: readers of many records use a
     * {@link Bound} decoder.
     */
    public Result decode(EventRecord record) {
        if (record.tree() != null) {
            return decode(record.tree());
        }
        return decode(record.values(), slotsIn(record.layout()), new Object[termFields.length]);
    }

    /**
     * This decoder tied to the slot layout of one scanner, with the slots looked up once: decodes
     * that scanner's records directly; records of any other form go to {@link #decode(EventRecord)}.
     * Same results as {@link #decode(EventRecord)}. It keeps a scratch array for the terms' raw values,
     * so it belongs to one reader and its thread, like the scanner it is bound to.
     */
    public final class Bound {
        private final PointerTrie layout;
        private final int[] slots;
        private final Object[] raw = new Object[termFields.length];

        private Bound(PointerTrie layout) {
            this.layout = layout;
            this.slots = slotsIn(layout);
        }

        public Result decode(EventRecord record) {
            if (record.tree() == null && record.layout() == layout) {
                return EventDecoder.this.decode(record.values(), slots, raw);
            }
            return EventDecoder.this.decode(record);
        }
    }

    /** This decoder bound to the layout of {@code scanner} (built with this decoder's monitor). */
    public Bound boundTo(RecordScanner scanner) {
        return new Bound(scanner.layout());
    }

    /** The slot of each of this decoder's fields in {@code layout}. */
    private int[] slotsIn(PointerTrie layout) {
        int[] slots = new int[fields.length];
        for (int f = 0; f < fields.length; f++) {
            slots[f] = layout.slotOf(fields[f]);
        }
        return slots;
    }

    /** The fields this monitor reads: id, time, outcome, the split field if any, then every term's field. */
    public static List<JsonPointer> fieldsRead(MonitorDefinition monitor) {
        List<JsonPointer> fields = new ArrayList<>();
        fields.add(monitor.event().id());
        fields.add(monitor.event().time());
        fields.add(monitor.event().outcome().field());
        if (monitor.split() != null) {
            fields.add(monitor.split().field());
        }
        for (TermSpec term : monitor.terms()) {
            fields.add(term.field());
        }
        return fields;
    }

    /**
     * The decision itself, on the values of this monitor's fields ({@code slots[f]}: field f's slot);
     * {@code raw} (one place per term) is scratch, overwritten here and not kept.
     */
    private Result decode(FieldValues values, int[] slots, Object[] raw) {
        JsonPointer idField = fields[ID];
        int idSlot = slots[ID];
        if (values.absent(idSlot)) {
            return reject(RejectReason.MISSING_FIELD, "no event id at " + idField);
        }
        if (!values.isValue(idSlot)) {
            return reject(RejectReason.BAD_ID, "the event id at " + idField + " must be text or a number");
        }
        String id = values.asText(idSlot);
        String badId = notAnIdentifier(values, idSlot, id);
        if (badId != null) {
            return reject(RejectReason.BAD_ID, "the event id at " + idField + " " + badId);
        }

        JsonPointer timeField = fields[TIME];
        int timeSlot = slots[TIME];
        if (values.absent(timeSlot)) {
            return reject(RejectReason.MISSING_FIELD, "no event time at " + timeField);
        }
        long time;
        try {
            time = parseTime(values, timeSlot);
        } catch (IllegalArgumentException e) {
            return reject(RejectReason.BAD_TIME, e.getMessage());
        }

        OutcomeSpec outcomeSpec = monitor.event().outcome();
        int outcomeSlot = slots[OUTCOME];
        if (values.absent(outcomeSlot)) {
            return reject(RejectReason.MISSING_FIELD, "no outcome at " + outcomeSpec.field());
        }
        String outcomeText = values.isValue(outcomeSlot) ? scalarText(values, outcomeSlot) : null;
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
        if (hasSplit) {
            JsonPointer splitField = fields[SPLIT];
            int splitSlot = slots[SPLIT];
            if (values.absent(splitSlot)) {
                return reject(RejectReason.MISSING_FIELD, "no split value at " + splitField);
            }
            if (!values.isValue(splitSlot)) {
                return reject(RejectReason.BAD_ID, "the split value at " + splitField + " must be text or a number");
            }
            splitValue = scalarText(values, splitSlot);
            String badSplit = notAnIdentifier(values, splitSlot, splitValue);
            if (badSplit != null) {
                return reject(RejectReason.BAD_ID, "the split value at " + splitField + " " + badSplit);
            }
        }

        long absentTerms = 0;
        for (int t = 0; t < termFields.length; t++) {
            int slot = slots[firstTerm + t];
            if (values.isContainer(slot)) {
                return reject(RejectReason.BAD_VALUE, termNames[t] + ": expected a single value at " + termFields[t]
                        + ", found " + (values.kinds[slot] == FieldValues.ARRAY ? "a list" : "an object"));
            }
            raw[t] = plain(values, slot);
            if (raw[t] == null && t < Long.SIZE) {
                absentTerms |= 1L << t;
            }
        }
        double[] row = new double[coder.width()];
        CodingOutcome coding = coder.code(raw, row);
        String notNumeric = null;
        int numeric;
        while (coding.isRejected() && (numeric = numericTerm(coding)) >= 0) {
            // A value of a numeric term that is not a finite number is treated as missing: the
            // event counts for prevalence and is left out of the fit, like an absent value.
            if (notNumeric == null) {
                notNumeric = coding.term() + ": " + coding.detail() + " (taken as missing)";
            }
            raw[numeric] = null;
            coding = coder.code(raw, row);
        }
        if (coding.isRejected()) {
            return reject(coding.reason(), coding.term() + ": " + coding.detail());
        }
        String missingDetail = coding.isOk() ? null : notNumeric != null ? notNumeric
                : coding.term() + ": " + coding.detail();
        int stratum = stratumCoding == null ? -1 : stratumCoding.levelIndex(raw[stratumTerm]);
        return new Result(new DecodedEvent(id, time, positive, splitValue, coding.isOk() ? row : null, stratum,
                missingDetail, absentTerms), null);
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
     * Why a scalar cannot identify an event or a stream, or null when it can: a number that is not
     * finite ({@code 1e400} overflows a double), or text holding an unpaired surrogate (such as
     * U+D800 escaped alone in JSON: it has no UTF-8 form, so it could not be written to any output).
     */
    private static String notAnIdentifier(FieldValues values, int slot, String text) {
        if (values.kinds[slot] == FieldValues.FLOAT && !Double.isFinite(values.doubles[slot])) {
            return "is a number beyond the range of a double (" + text + ")";
        }
        if (values.kinds[slot] == FieldValues.TEXT && Unicode.hasUnpairedSurrogate(text)) {
            return "holds an unpaired UTF-16 surrogate";
        }
        return null;
    }

    private static Result reject(String reason, String detail) {
        return new Result(null, new Rejection(reason, detail));
    }

    /** {@link #parseTime(JsonNode)} on a field value. */
    private static long parseTime(FieldValues values, int slot) {
        switch (values.kinds[slot]) {
            case FieldValues.INTEGER:
                return values.longs[slot];
            case FieldValues.BIG_INTEGER:
                throw new IllegalArgumentException("time " + values.asText(slot) + " is out of range");
            case FieldValues.FLOAT: {
                double value = values.doubles[slot];
                if (value == Math.rint(value) && Math.abs(value) < 9.0e15) {
                    return (long) value;
                }
                throw new IllegalArgumentException("time " + values.asText(slot) + " is not whole epoch milliseconds");
            }
            case FieldValues.TEXT:
                // Read by the scanner when the text has the common shape: then it has no space
                // around it and is not all digits, so parseTime(String) would give the same value.
                long read = values.times[slot];
                return read != Long.MIN_VALUE ? read : parseTime(values.text(slot));
            default:
                throw new IllegalArgumentException("time must be RFC 3339 text or epoch milliseconds");
        }
    }

    /**
     * Event time in epoch milliseconds: RFC 3339 text with an offset, or whole epoch milliseconds as a
     * number or a string of digits.
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
        return parseTime(node.textValue());
    }

    /** {@link #parseTime(JsonNode)} for text. */
    public static long parseTime(String text) {
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
    private static String scalarText(FieldValues values, int slot) {
        if (values.kinds[slot] == FieldValues.FLOAT) {
            double value = values.doubles[slot];
            return value == Math.rint(value) && Math.abs(value) < 1e15 ? Long.toString((long) value) : values.asText(slot);
        }
        return values.asText(slot);
    }

    /** A JSON scalar as the plain Java value {@link DesignCoder#code} expects; null when absent. */
    private static Object plain(FieldValues values, int slot) {
        return switch (values.kinds[slot]) {
            case FieldValues.MISSING, FieldValues.NULL -> null;
            case FieldValues.TEXT -> values.text(slot).isEmpty() ? null : values.text(slot);
            case FieldValues.TRUE -> Boolean.TRUE;
            case FieldValues.FALSE -> Boolean.FALSE;
            case FieldValues.INTEGER -> values.longs[slot];
            case FieldValues.BIG_INTEGER -> values.bigs[slot].doubleValue();
            default -> values.doubles[slot];
        };
    }
}
