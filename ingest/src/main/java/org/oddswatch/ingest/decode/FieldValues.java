package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.databind.JsonNode;
import java.math.BigInteger;
import java.util.Arrays;

/**
 * The values found at a fixed list of JSON Pointers (one slot each), in the form the decoder needs:
 * the kind of JSON value, and for scalars the value itself. A slot of a pointer that matched nothing
 * is {@link #MISSING}, like {@link JsonNode#at} giving a missing node. Not thread-safe; reused record
 * after record.
 */
final class FieldValues {

    static final byte MISSING = 0;
    static final byte NULL = 1;
    static final byte TEXT = 2;
    static final byte TRUE = 3;
    static final byte FALSE = 4;
    /** A whole number that fits a long. */
    static final byte INTEGER = 5;
    /** A whole number beyond the range of a long. */
    static final byte BIG_INTEGER = 6;
    /** A number with a fraction or an exponent. */
    static final byte FLOAT = 7;
    static final byte OBJECT = 8;
    static final byte ARRAY = 9;

    final byte[] kinds;
    /**
     * Text of TEXT slots; for FLOAT slots filled from a tree, the node's own text form; for number
     * slots of event ids read by the scanner, the number's text in the record (else null).
     * A TEXT slot set by {@link #setTimeText} has no string until {@link #text} makes it: read the
     * text of a TEXT slot with {@link #text}, not from here.
     */
    final String[] texts;
    /** Characters of TEXT slots set by {@link #setTimeText}, and their number. */
    private final char[][] pending;
    private final int[] pendingLength;
    final long[] longs;
    final double[] doubles;
    final BigInteger[] bigs;
    /**
     * For TEXT slots the scanner read as an event time: the epoch milliseconds of the text when it
     * has the common RFC 3339 shape ({@link Rfc3339#fast(char[], int, int)}), else
     * {@link Long#MIN_VALUE} (the decoder then parses the text itself). Any change of the text
     * resets it.
     */
    final long[] times;

    FieldValues(int slots) {
        kinds = new byte[slots];
        texts = new String[slots];
        longs = new long[slots];
        doubles = new double[slots];
        bigs = new BigInteger[slots];
        times = new long[slots];
        Arrays.fill(times, Long.MIN_VALUE);
        pending = new char[slots][];
        pendingLength = new int[slots];
    }

    int size() {
        return kinds.length;
    }

    void reset() {
        Arrays.fill(kinds, MISSING);
        Arrays.fill(texts, null);
        Arrays.fill(bigs, null);
        Arrays.fill(times, Long.MIN_VALUE);
    }

    void clear(int slot) {
        kinds[slot] = MISSING;
        texts[slot] = null;
        bigs[slot] = null;
        times[slot] = Long.MIN_VALUE;
    }

    void setText(int slot, String text) {
        kinds[slot] = TEXT;
        texts[slot] = text;
        times[slot] = Long.MIN_VALUE;
    }

    /**
     * A TEXT slot whose text {@code chars[from, from + length)} was read as the event time
     * {@code epochMillis} (see {@link #times}); its string is made only if {@link #text} is asked
     * for (for a message, or by a monitor that reads the field as something else too).
     */
    void setTimeText(int slot, char[] chars, int from, int length, long epochMillis) {
        kinds[slot] = TEXT;
        texts[slot] = null;
        char[] buffer = pending[slot];
        if (buffer == null || buffer.length < length) {
            buffer = new char[Math.max(32, length)];
            pending[slot] = buffer;
        }
        System.arraycopy(chars, from, buffer, 0, length);
        pendingLength[slot] = length;
        times[slot] = epochMillis;
    }

    /** The text of a TEXT slot (made from its characters on first use after {@link #setTimeText}). */
    String text(int slot) {
        String text = texts[slot];
        if (text == null && kinds[slot] == TEXT) {
            text = new String(pending[slot], 0, pendingLength[slot]);
            texts[slot] = text;
        }
        return text;
    }

    void setLong(int slot, long value) {
        kinds[slot] = INTEGER;
        longs[slot] = value;
        texts[slot] = null;
    }

    void setBig(int slot, BigInteger value) {
        kinds[slot] = BIG_INTEGER;
        bigs[slot] = value;
        texts[slot] = null;
    }

    /**
     * Keeps the number's text exactly as the record wrote it (event ids: {@code -0} is not
     * {@code 0}, {@code 1e400} not {@code 7e400}); {@link #asText} then gives it.
     */
    void setNumberText(int slot, String text) {
        texts[slot] = text;
    }

    void setDouble(int slot, double value, String text) {
        kinds[slot] = FLOAT;
        doubles[slot] = value;
        texts[slot] = text;
    }

    /** Copies a tree node (as returned by {@link JsonNode#at}) into a slot. */
    void setNode(int slot, JsonNode node) {
        clear(slot);
        if (node.isMissingNode()) {
            return;
        }
        if (node.isNull()) {
            kinds[slot] = NULL;
        } else if (node.isTextual()) {
            setText(slot, node.textValue());
        } else if (node.isBoolean()) {
            kinds[slot] = node.booleanValue() ? TRUE : FALSE;
        } else if (node.isIntegralNumber()) {
            if (node.canConvertToLong()) {
                setLong(slot, node.longValue());
            } else {
                setBig(slot, node.bigIntegerValue());
            }
        } else if (node.isNumber()) {
            setDouble(slot, node.doubleValue(), node.asText());
        } else if (node.isArray()) {
            kinds[slot] = ARRAY;
        } else if (node.isObject()) {
            kinds[slot] = OBJECT;
        } else {
            // binary or POJO nodes never come out of parsing; treat them as text like asText() does
            setText(slot, node.asText());
        }
    }

    /** Absent in the sense of the decoder: missing, null or empty text. */
    boolean absent(int slot) {
        byte kind = kinds[slot];
        return kind == MISSING || kind == NULL
                || (kind == TEXT && (texts[slot] != null ? texts[slot].isEmpty() : pendingLength[slot] == 0));
    }

    /** A scalar (text, number, boolean or null), not an object, array or nothing. */
    boolean isValue(int slot) {
        byte kind = kinds[slot];
        return kind != MISSING && kind != OBJECT && kind != ARRAY;
    }

    boolean isContainer(int slot) {
        byte kind = kinds[slot];
        return kind == OBJECT || kind == ARRAY;
    }

    /** The text form {@link JsonNode#asText()} gives the same value. */
    String asText(int slot) {
        return switch (kinds[slot]) {
            case TEXT -> text(slot);
            case TRUE -> "true";
            case FALSE -> "false";
            case NULL -> "null";
            case INTEGER -> texts[slot] != null ? texts[slot] : Long.toString(longs[slot]);
            case BIG_INTEGER -> texts[slot] != null ? texts[slot] : bigs[slot].toString();
            case FLOAT -> texts[slot] != null ? texts[slot] : Double.toString(doubles[slot]);
            default -> "";
        };
    }
}
