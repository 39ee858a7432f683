package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonFactoryBuilder;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.exc.StreamConstraintsException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectReader;
import com.fasterxml.jackson.databind.cfg.JsonNodeFeature;
import com.fasterxml.jackson.databind.json.JsonMapper;
import java.io.IOException;
import java.util.Locale;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * Parses one record value into a JSON tree under the record limits, checked in this order: more
 * than {@code maxRecordBytes} is {@code oversized} (not parsed); bytes that are not well-formed UTF-8
 * ({@link Unicode#firstInvalidUtf8}) are {@code malformed-json}; nesting beyond {@code maxDepth} is
 * {@code too-deep}; anything but exactly one JSON value is {@code malformed-json}; a value that is
 * not an object is {@code not-an-object}. A member name given twice keeps its last value. Numbers
 * with a fraction or exponent stay exact decimals, trailing zeros included ({@code 1.50}), so a
 * numeric event id keeps its digits. Thread-safe.
 */
public final class RecordParser {

    private final RecordLimits limits;
    private final ObjectReader reader;

    public RecordParser(RecordLimits limits) {
        this.limits = limits;
        this.reader = JsonMapper.builder(new JsonFactoryBuilder().streamReadConstraints(StreamReadConstraints.builder()
                        .maxNestingDepth(limits.maxDepth()).maxStringLength(Math.max(limits.maxRecordBytes(), 1))
                        .build()).build())
                .enable(DeserializationFeature.FAIL_ON_TRAILING_TOKENS)
                .enable(DeserializationFeature.USE_BIG_DECIMAL_FOR_FLOATS)
                .disable(JsonNodeFeature.STRIP_TRAILING_BIGDECIMAL_ZEROES)
                .build().reader();
    }

    /** The record's JSON object; otherwise throws with the reason and a readable detail. */
    public JsonNode parse(byte[] value) throws UnreadableRecordException {
        if (value == null) {
            throw new UnreadableRecordException(RejectReason.MALFORMED_JSON, "the record has no value (tombstone)");
        }
        if (value.length > limits.maxRecordBytes()) {
            throw new UnreadableRecordException(RejectReason.OVERSIZED,
                    value.length + " bytes is more than the limit of " + limits.maxRecordBytes());
        }
        int invalid = Unicode.firstInvalidUtf8(value, 0, value.length);
        if (invalid >= 0) {
            throw new UnreadableRecordException(RejectReason.MALFORMED_JSON,
                    "not valid UTF-8 at byte " + invalid + " (0x" + Integer.toHexString(value[invalid] & 0xFF) + ")");
        }
        JsonNode tree;
        try {
            tree = reader.readTree(value);
        } catch (StreamConstraintsException e) {
            String message = e.getOriginalMessage();
            if (message != null && message.toLowerCase(Locale.ROOT).contains("depth")) {
                throw new UnreadableRecordException(RejectReason.TOO_DEEP, "nesting deeper than " + limits.maxDepth());
            }
            throw new UnreadableRecordException(RejectReason.OVERSIZED, message);
        } catch (JsonProcessingException e) {
            throw new UnreadableRecordException(RejectReason.MALFORMED_JSON, firstLine(e.getOriginalMessage()));
        } catch (IOException | RuntimeException e) {
            // RuntimeException: should a number be one that BigDecimal cannot hold, it costs only its record
            throw new UnreadableRecordException(RejectReason.MALFORMED_JSON, firstLine(e.getMessage()));
        }
        if (tree.isMissingNode()) {
            throw new UnreadableRecordException(RejectReason.MALFORMED_JSON, "the record is empty");
        }
        if (!tree.isObject()) {
            throw new UnreadableRecordException(RejectReason.NOT_AN_OBJECT, "expected a JSON object, found "
                    + (tree.isArray() ? "an array" : tree.isNull() ? "null" : tree.isTextual() ? "a string"
                    : tree.isBoolean() ? "a boolean" : "a number"));
        }
        return tree;
    }

    private static String firstLine(String message) {
        return message == null ? "unreadable JSON" : message.lines().findFirst().orElse("");
    }
}
