package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.ByteArrayOutputStream;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.definition.RecordLimits;

/** What {@link RecordParser} refuses, with which reason and detail, and what it reads. */
class RecordParserTest {

    /** At most 400 bytes, nesting at most 5 deep. */
    private final RecordParser parser = new RecordParser(new RecordLimits(400, 5));

    private Rejection refused(byte[] value) {
        return assertThrows(UnreadableRecordException.class, () -> parser.parse(value)).rejection();
    }

    private Rejection refused(String value) {
        return refused(value.getBytes(StandardCharsets.UTF_8));
    }

    private JsonNode parse(String value) throws UnreadableRecordException {
        return parser.parse(value.getBytes(StandardCharsets.UTF_8));
    }

    @Test
    void reasonsOfRecordsThatAreNotOneObject() {
        assertEquals(RejectReason.MALFORMED_JSON, refused("{\"id\": 1,").reason());
        assertEquals(RejectReason.MALFORMED_JSON, refused("{\"id\": 1} trailing").reason());
        assertEquals(RejectReason.MALFORMED_JSON, refused("{\"id\": 1}{\"id\": 2}").reason());
        assertEquals(RejectReason.MALFORMED_JSON, refused("{'id': 1}").reason());
        assertEquals(RejectReason.MALFORMED_JSON, refused("{\"id\": NaN}").reason());
        assertEquals(new Rejection(RejectReason.MALFORMED_JSON, "the record is empty"), refused("   "));
        assertEquals(new Rejection(RejectReason.MALFORMED_JSON, "the record has no value (tombstone)"),
                refused((byte[]) null));
        assertEquals(new Rejection(RejectReason.NOT_AN_OBJECT, "expected a JSON object, found an array"),
                refused("[1, 2]"));
        assertEquals(new Rejection(RejectReason.NOT_AN_OBJECT, "expected a JSON object, found a string"),
                refused("\"text\""));
        assertEquals(new Rejection(RejectReason.NOT_AN_OBJECT, "expected a JSON object, found null"), refused("null"));
        assertEquals(new Rejection(RejectReason.NOT_AN_OBJECT, "expected a JSON object, found a number"), refused("5"));
    }

    /** The caps: 400 bytes (401 is refused unparsed), depth 5 (the root object counts as 1). */
    @Test
    void oversizedAndTooDeepKeepTheirReasonsAndDetails() throws Exception {
        String padded = "{\"pad\": \"" + "x".repeat(400 - 11) + "\"}";
        assertEquals(400, padded.length());
        assertTrue(parse(padded).isObject());
        assertEquals(new Rejection(RejectReason.OVERSIZED, "401 bytes is more than the limit of 400"),
                refused(padded.replace("\"x", "\"xx")));
        assertEquals(new Rejection(RejectReason.OVERSIZED, "401 bytes is more than the limit of 400"),
                refused("x".repeat(401)), "refused before parsing: even when it is not JSON at all");
        assertTrue(parse("{\"a\":{\"b\":{\"c\":{\"d\":1}}}}").isObject());
        assertTrue(parse("{\"a\":{\"b\":{\"c\":{\"d\":[1]}}}}").isObject());
        assertEquals(new Rejection(RejectReason.TOO_DEEP, "nesting deeper than 5"),
                refused("{\"a\":{\"b\":{\"c\":{\"d\":{\"e\":{\"f\":1}}}}}}"));
        assertEquals(new Rejection(RejectReason.TOO_DEEP, "nesting deeper than 5"),
                refused("{\"a\":[[[[[1]]]]]}"));
    }

    /**
     * Bytes that are not well-formed UTF-8 are malformed-json, named by their offset. Source:
     * Unicode Standard 15.0, section 3.9, table 3-7 (well-formed byte sequences).
     */
    @Test
    void illFormedUtf8IsMalformedJson() throws Exception {
        int[][] bad = {{0xC0, 0xAF}, {0xC1, 0xBF}, {0xE0, 0x80, 0xAF}, {0xED, 0xA0, 0x80}, {0xF0, 0x80, 0x80, 0xAF},
                {0xF4, 0x90, 0x80, 0x80}, {0xF5, 0x80, 0x80, 0x80}, {0x80}, {0xE2, 0x82}};
        for (int[] sequence : bad) {
            Rejection rejection = refused(withIdBytes(sequence));
            assertEquals(RejectReason.MALFORMED_JSON, rejection.reason(), Arrays.toString(sequence));
            assertTrue(rejection.detail().startsWith("not valid UTF-8 at byte 7 (0x"), rejection.detail());
        }
        // The boundaries themselves are well-formed: U+0080, U+07FF, U+0800, U+D7FF, U+E000, U+10000, U+10FFFF.
        int[][] good = {{0xC2, 0x80}, {0xDF, 0xBF}, {0xE0, 0xA0, 0x80}, {0xED, 0x9F, 0xBF}, {0xEE, 0x80, 0x80},
                {0xF0, 0x90, 0x80, 0x80}, {0xF4, 0x8F, 0xBF, 0xBF}};
        for (int[] sequence : good) {
            byte[] json = withIdBytes(sequence);
            assertEquals(new String(json, StandardCharsets.UTF_8).substring(7, 7 + (sequence.length == 4 ? 2 : 1)),
                    parser.parse(json).get("id").textValue(), Arrays.toString(sequence));
        }
    }

    /** A record whose id is exactly {@code sequence}: its first byte is byte 7. */
    private static byte[] withIdBytes(int[] sequence) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        out.writeBytes("{\"id\":\"".getBytes(StandardCharsets.UTF_8));
        for (int b : sequence) {
            out.write(b);
        }
        out.writeBytes("\",\"result\":\"positive\"}".getBytes(StandardCharsets.UTF_8));
        return out.toByteArray();
    }

    /** Source: Jackson's ObjectNode keeps the last value of a repeated member name. */
    @Test
    void aRepeatedMemberKeepsItsLastValue() throws Exception {
        JsonNode tree = parse("{\"a\":{\"b\":1},\"a\":{\"c\":3}}");
        assertTrue(tree.at("/a/b").isMissingNode());
        assertEquals(3, tree.at("/a/c").intValue());
    }

    /** Numbers with a fraction or exponent keep their digits, trailing zeros included; none breaks parsing. */
    @Test
    void numbersKeepTheirDigits() throws Exception {
        JsonNode tree = parse("{\"a\":1.50,\"b\":1e3,\"c\":-0.0,\"d\":12345678901234567890123,\"e\":1e400}");
        assertEquals("1.50", tree.get("a").asText());
        assertEquals("1E+3", tree.get("b").asText());
        assertEquals("0.0", tree.get("c").asText());
        assertEquals("12345678901234567890123", tree.get("d").asText());
        assertEquals(Double.POSITIVE_INFINITY, tree.get("e").doubleValue());
        for (String odd : new String[] {"1e9999999999", "1e-9999999999", "-1e2147483648"}) {
            try {
                assertTrue(parse("{\"n\":" + odd + "}").get("n").isNumber(), odd);
            } catch (UnreadableRecordException e) {
                assertEquals(RejectReason.MALFORMED_JSON, e.rejection().reason(), odd);
            }
        }
    }
}
