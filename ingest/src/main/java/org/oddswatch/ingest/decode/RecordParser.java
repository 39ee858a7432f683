package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonFactoryBuilder;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.exc.StreamConstraintsException;
import com.fasterxml.jackson.core.util.BufferRecycler;
import com.fasterxml.jackson.core.util.RecyclerPool;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectReader;
import com.fasterxml.jackson.databind.json.JsonMapper;
import java.io.IOException;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * Parses one record value into a JSON tree under the configured caps: values longer than
 * {@code maxRecordBytes} are refused before parsing ({@code oversized}); nesting beyond
 * {@code maxDepth} stops the parser ({@code too-deep}, via {@link StreamReadConstraints}); anything
 * that is not exactly one JSON object, or not well-formed UTF-8 ({@link Unicode#firstInvalidUtf8}:
 * overlong forms, encoded surrogates and code points above U+10FFFF included), is
 * {@code malformed-json} or {@code not-an-object}. Thread-safe.
 */
public final class RecordParser {

    private final RecordLimits limits;
    private final ObjectReader reader;

    public RecordParser(RecordLimits limits) {
        this.limits = limits;
        this.reader = JsonMapper.builder(factory(limits))
                .enable(DeserializationFeature.FAIL_ON_TRAILING_TOKENS)
                .build()
                .reader();
    }

    /** A JSON factory whose parsers apply the caps of {@code limits} (shared with {@link RecordScanner}). */
    static JsonFactory factory(RecordLimits limits) {
        return builder(limits).build();
    }

    /** The same, with parse buffers from {@code pool}. */
    static JsonFactory factory(RecordLimits limits, RecyclerPool<BufferRecycler> pool) {
        return builder(limits).recyclerPool(pool).build();
    }

    private static JsonFactoryBuilder builder(RecordLimits limits) {
        return new JsonFactoryBuilder()
                .streamReadConstraints(StreamReadConstraints.builder()
                        .maxNestingDepth(limits.maxDepth())
                        .maxStringLength(Math.max(limits.maxRecordBytes(), 1))
                        .build());
    }

    /** The outcome of parsing: a tree, or a rejection. */
    public record Parsed(JsonNode tree, Rejection rejection) {
        public boolean ok() {
            return rejection == null;
        }
    }

    public Parsed parse(byte[] value) {
        if (value == null) {
            return new Parsed(null, new Rejection(RejectReason.MALFORMED_JSON, "the record has no value (tombstone)"));
        }
        if (value.length > limits.maxRecordBytes()) {
            return new Parsed(null, new Rejection(RejectReason.OVERSIZED,
                    value.length + " bytes is more than the limit of " + limits.maxRecordBytes()));
        }
        int invalid = Unicode.firstInvalidUtf8(value, 0, value.length);
        if (invalid >= 0) {
            return new Parsed(null, new Rejection(RejectReason.MALFORMED_JSON,
                    "not valid UTF-8 at byte " + invalid + " (0x" + Integer.toHexString(value[invalid] & 0xFF) + ")"));
        }
        JsonNode tree;
        try {
            tree = reader.readTree(value);
        } catch (StreamConstraintsException e) {
            String message = e.getOriginalMessage();
            boolean depth = message != null && message.toLowerCase(java.util.Locale.ROOT).contains("depth");
            return new Parsed(null, new Rejection(depth ? RejectReason.TOO_DEEP : RejectReason.OVERSIZED,
                    depth ? "nesting deeper than " + limits.maxDepth() : message));
        } catch (JsonProcessingException e) {
            return new Parsed(null, new Rejection(RejectReason.MALFORMED_JSON, firstLine(e.getOriginalMessage())));
        } catch (IOException e) {
            return new Parsed(null, new Rejection(RejectReason.MALFORMED_JSON, firstLine(e.getMessage())));
        }
        if (tree.isMissingNode()) {
            return new Parsed(null, new Rejection(RejectReason.MALFORMED_JSON, "the record is empty"));
        }
        if (!tree.isObject()) {
            return new Parsed(null, new Rejection(RejectReason.NOT_AN_OBJECT,
                    "expected a JSON object, found " + describe(tree)));
        }
        return new Parsed(tree, null);
    }

    private static String describe(JsonNode tree) {
        if (tree.isArray()) {
            return "an array";
        }
        if (tree.isNull()) {
            return "null";
        }
        return tree.isTextual() ? "a string" : tree.isBoolean() ? "a boolean" : "a number";
    }

    private static String firstLine(String message) {
        if (message == null) {
            return "unreadable JSON";
        }
        int newline = message.indexOf('\n');
        return newline < 0 ? message : message.substring(0, newline);
    }
}
