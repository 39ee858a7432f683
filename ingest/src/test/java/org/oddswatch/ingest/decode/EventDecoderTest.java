package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.RecordLimits;

class EventDecoderTest {

    static final String DEFINITION = String.join("\n",
            "monitors:",
            "  - name: north",
            "    input: {topic: clinic-tests}",
            "    event:",
            "      id: /id",
            "      time: /collectedAt",
            "      outcome: {field: /result, positive: [positive, 'true'], negative: [negative, 'false']}",
            "    split: {field: /region}",
            "    terms:",
            "      - {name: household_contact, field: /exposure/household, kind: binary, watched: true}",
            "      - {name: age_years, field: /age, kind: numeric, per: 10}",
            "      - name: age_band",
            "        field: /ageBand",
            "        kind: categorical",
            "        levels: ['0-17', '18-39', '40-64', '65+']",
            "        reference: '18-39'",
            "        undeclared: missing",
            "      - {name: sex, field: /sex, kind: categorical, levels: [female, male], reference: female}",
            "    window: {width: P28D, step: P7D}",
            "    estimates: {stratifyBy: age_band}",
            "");

    private final MonitorDefinition monitor = load();
    private final EventDecoder decoder = new EventDecoder(monitor);
    private final RecordParser parser = new RecordParser(new RecordLimits(400, 5));

    private static MonitorDefinition load() {
        try {
            return DefinitionLoader.parse("test.yaml", DEFINITION, Map.of(), null).monitors().get(0);
        } catch (Exception e) {
            throw new AssertionError(e);
        }
    }

    /** A complete valid event with one field replaced (or removed, when value is null). */
    private static String event(String field, String value) {
        Map<String, String> fields = new java.util.LinkedHashMap<>();
        fields.put("id", "\"e1\"");
        fields.put("collectedAt", "\"2026-02-03T09:30:00Z\"");
        fields.put("result", "\"positive\"");
        fields.put("region", "\"north\"");
        fields.put("exposure", "{\"household\": \"yes\"}");
        fields.put("age", "42");
        fields.put("ageBand", "\"40-64\"");
        fields.put("sex", "\"male\"");
        if (value == null) {
            fields.remove(field);
        } else {
            fields.put(field, value);
        }
        StringBuilder json = new StringBuilder("{");
        fields.forEach((k, v) -> json.append(json.length() > 1 ? "," : "").append('"').append(k).append("\":").append(v));
        return json.append('}').toString();
    }

    private EventDecoder.Result decode(String json) {
        RecordParser.Parsed parsed = parser.parse(json.getBytes(StandardCharsets.UTF_8));
        assertTrue(parsed.ok(), () -> "parse failed: " + parsed.rejection());
        return decoder.decode(parsed.tree());
    }

    private String parseReason(String json) {
        RecordParser.Parsed parsed = parser.parse(json.getBytes(StandardCharsets.UTF_8));
        assertFalse(parsed.ok(), json);
        return parsed.rejection().reason();
    }

    private String decodeReason(String json) {
        EventDecoder.Result result = decode(json);
        assertFalse(result.ok(), json);
        return result.rejection().reason();
    }

    @Test
    void decodesACompleteEvent() {
        EventDecoder.Result result = decode(event("id", "\"e1\""));
        assertTrue(result.ok());
        DecodedEvent e = result.event();
        assertEquals("e1", e.id());
        assertEquals(Instant.parse("2026-02-03T09:30:00Z").toEpochMilli(), e.timeMillis());
        assertTrue(e.positive());
        assertEquals("north", e.splitValue());
        // intercept, household=yes, age/10, age_band 0-17, 40-64, 65+ (reference 18-39), sex=male
        assertArrayEquals(new double[] {1, 1, 4.2, 0, 1, 0, 1}, e.row(), 1e-12);
        assertEquals(2, e.stratum());
        assertNull(e.missingDetail());
    }

    @Test
    void parserReasons() {
        assertEquals(RejectReason.MALFORMED_JSON, parseReason("{\"id\": 1,"));
        assertEquals(RejectReason.MALFORMED_JSON, parseReason("{\"id\": 1} trailing"));
        assertEquals(RejectReason.MALFORMED_JSON, parseReason(""));
        assertEquals(RejectReason.NOT_AN_OBJECT, parseReason("[1, 2]"));
        assertEquals(RejectReason.NOT_AN_OBJECT, parseReason("\"text\""));
        assertEquals(RejectReason.OVERSIZED, parseReason("{\"pad\": \"" + "x".repeat(400) + "\"}"));
        assertEquals(RejectReason.TOO_DEEP, parseReason("{\"a\":{\"b\":{\"c\":{\"d\":{\"e\":{\"f\":1}}}}}}"));
        assertTrue(parser.parse("{\"a\":{\"b\":{\"c\":{\"d\":1}}}}".getBytes(StandardCharsets.UTF_8)).ok());
        byte[] notUtf8 = {'{', '"', 'a', '"', ':', '"', (byte) 0xC3, (byte) 0x28, '"', '}'};
        assertEquals(RejectReason.MALFORMED_JSON, parser.parse(notUtf8).rejection().reason());
        assertEquals(RejectReason.MALFORMED_JSON, parser.parse(null).rejection().reason());
    }

    @Test
    void missingFields() {
        assertEquals(RejectReason.MISSING_FIELD, decodeReason(event("id", null)));
        assertEquals(RejectReason.MISSING_FIELD, decodeReason(event("id", "\"\"")));
        assertEquals(RejectReason.MISSING_FIELD, decodeReason(event("collectedAt", "null")));
        assertEquals(RejectReason.MISSING_FIELD, decodeReason(event("result", null)));
        assertEquals(RejectReason.MISSING_FIELD, decodeReason(event("region", null)));
    }

    @Test
    void badIdOutcomeAndTime() {
        assertEquals(RejectReason.BAD_ID, decodeReason(event("id", "{\"x\": 1}")));
        assertEquals(RejectReason.BAD_OUTCOME, decodeReason(event("result", "\"inconclusive\"")));
        assertEquals(RejectReason.BAD_OUTCOME, decodeReason(event("result", "[\"positive\"]")));
        assertEquals(RejectReason.BAD_TIME, decodeReason(event("collectedAt", "\"yesterday\"")));
        assertEquals(RejectReason.BAD_TIME, decodeReason(event("collectedAt", "\"2026-02-03T09:30:00\"")));
        assertEquals(RejectReason.BAD_TIME, decodeReason(event("collectedAt", "1.5")));
        assertEquals(RejectReason.BAD_TIME, decodeReason(event("collectedAt", "true")));
    }

    @Test
    void outcomesMatchTheirTextForm() {
        assertTrue(decode(event("result", "true")).event().positive());
        assertFalse(decode(event("result", "false")).event().positive());
        assertFalse(decode(event("result", "\"negative\"")).event().positive());
    }

    @Test
    void timesAsRfc3339OrEpochMilliseconds() {
        long expected = Instant.parse("2026-02-03T08:30:00Z").toEpochMilli();
        assertEquals(expected, decode(event("collectedAt", "\"2026-02-03T09:30:00+01:00\"")).event().timeMillis());
        assertEquals(expected, decode(event("collectedAt", Long.toString(expected))).event().timeMillis());
        assertEquals(expected, decode(event("collectedAt", "\"" + expected + "\"")).event().timeMillis());
        assertEquals(expected + 250, decode(event("collectedAt", "\"2026-02-03T08:30:00.250z\"")).event().timeMillis());
    }

    @Test
    void termRejections() {
        assertEquals(RejectReason.UNKNOWN_LEVEL, decodeReason(event("sex", "\"other\"")));
        assertEquals(RejectReason.UNKNOWN_LEVEL, decodeReason(event("exposure", "{\"household\": \"maybe\"}")));
        assertEquals(RejectReason.BAD_VALUE, decodeReason(event("exposure", "{\"household\": [\"yes\"]}")));
        EventDecoder.Result result = decode(event("sex", "\"other\""));
        assertTrue(result.rejection().detail().startsWith("sex: "), result.rejection().detail());
    }

    /** A missing covariate (ingest/README.md) is accepted and left out of the fit. */
    @Test
    void missingCovariatesAreAcceptedWithoutARow() {
        for (String json : new String[] {event("age", null), event("age", "null"), event("ageBand", "\"unknown\""),
                event("exposure", "{}"), event("sex", "\"\"")}) {
            EventDecoder.Result result = decode(json);
            assertTrue(result.ok(), json);
            assertNull(result.event().row(), json);
            assertFalse(result.event().complete());
            assertTrue(result.event().missingDetail() != null, json);
        }
        assertEquals(-1, decode(event("ageBand", "\"unknown\"")).event().stratum());
        assertEquals(2, decode(event("age", null)).event().stratum());
    }

    /** A value of a numeric term that is not a finite number is missing, not a rejection of the event. */
    @Test
    void aNonNumericValueOfANumericTermIsTakenAsMissing() {
        for (String age : new String[] {"\"old\"", "true", "1e400", "\"NaN-ish\""}) {
            EventDecoder.Result result = decode(event("age", age));
            assertTrue(result.ok(), age);
            assertNull(result.event().row(), age);
            assertTrue(result.event().missingDetail().startsWith("age_years: "), result.event().missingDetail());
            assertTrue(result.event().missingDetail().endsWith("(taken as missing)"), result.event().missingDetail());
            assertEquals(2, result.event().stratum(), "still counted in its stratum");
        }
        // A later term's rejection still rejects the event.
        assertEquals(RejectReason.UNKNOWN_LEVEL, decodeReason(event("age", "\"old\"").replace("\"male\"", "\"x\"")));
    }

    private EventDecoder.Result scan(byte[] json) {
        RecordScanner scanner = new RecordScanner(new RecordLimits(400, 5), java.util.List.of(monitor));
        RecordScanner.Scanned scanned = scanner.scan(json);
        return scanned.ok() ? decoder.decode(scanned.record()) : new EventDecoder.Result(null, scanned.rejection());
    }

    private EventDecoder.Result scan(String json) {
        return scan(json.getBytes(StandardCharsets.UTF_8));
    }

    /** Numeric ids keep the record's text: 0 and -0, 1.5 and 1.50 are different events. */
    @Test
    void numericIdsAndSplitValuesKeepTheirTextAndMustBeFinite() {
        assertEquals("0", scan(event("id", "0")).event().id());
        assertEquals("-0", scan(event("id", "-0")).event().id());
        assertEquals("1.50", scan(event("id", "1.50")).event().id());
        assertEquals("12345678901234567890123", scan(event("id", "12345678901234567890123")).event().id());
        for (String bad : new String[] {"1e400", "7e400", "-1e400"}) {
            EventDecoder.Result id = scan(event("id", bad));
            assertEquals(RejectReason.BAD_ID, id.rejection().reason(), bad);
            assertTrue(id.rejection().detail().contains("beyond the range of a double (" + bad + ")"),
                    id.rejection().detail());
            EventDecoder.Result split = scan(event("region", bad));
            assertEquals(RejectReason.BAD_ID, split.rejection().reason(), bad);
            assertEquals(RejectReason.BAD_ID, decodeReason(event("region", bad)), "the tree path too");
        }
        assertEquals("7", scan(event("region", "7")).event().splitValue());
        EventDecoder.Result surrogate = scan(event("id", "\"a\\ud800\""));
        assertEquals(RejectReason.BAD_ID, surrogate.rejection().reason());
        assertEquals(RejectReason.BAD_ID, scan(event("region", "\"\\udc00x\"")).rejection().reason());
        assertEquals("a\uD83D\uDE00", scan(event("id", "\"a\\ud83d\\ude00\"")).event().id(), "a pair is fine");
    }

    /**
     * Bytes that are not well-formed UTF-8 are malformed-json on both paths. Source: Unicode
     * Standard 15.0, section 3.9, table 3-7 (well-formed byte sequences).
     */
    @Test
    void illFormedUtf8IsMalformedJson() {
        int[][] bad = {{0xC0, 0xAF}, {0xC1, 0xBF}, {0xE0, 0x80, 0xAF}, {0xED, 0xA0, 0x80}, {0xF0, 0x80, 0x80, 0xAF},
                {0xF4, 0x90, 0x80, 0x80}, {0xF5, 0x80, 0x80, 0x80}, {0x80}, {0xE2, 0x82}};
        for (int[] sequence : bad) {
            byte[] json = withIdBytes(sequence);
            assertEquals(RejectReason.MALFORMED_JSON, parser.parse(json).rejection().reason(),
                    java.util.Arrays.toString(sequence));
            EventDecoder.Result scanned = scan(json);
            assertFalse(scanned.ok());
            assertTrue(scanned.rejection().detail().startsWith("not valid UTF-8 at byte 7"), scanned.rejection().detail());
        }
        // The boundaries themselves are well-formed: U+0080, U+07FF, U+0800, U+D7FF, U+E000, U+10000, U+10FFFF.
        int[][] good = {{0xC2, 0x80}, {0xDF, 0xBF}, {0xE0, 0xA0, 0x80}, {0xED, 0x9F, 0xBF}, {0xEE, 0x80, 0x80},
                {0xF0, 0x90, 0x80, 0x80}, {0xF4, 0x8F, 0xBF, 0xBF}};
        for (int[] sequence : good) {
            byte[] json = withIdBytes(sequence);
            assertTrue(scan(json).ok(), java.util.Arrays.toString(sequence));
            assertEquals(new String(json, StandardCharsets.UTF_8).substring(7, 7 + (sequence.length == 4 ? 2 : 1)),
                    scan(json).event().id());
        }
    }

    /** An event whose id is exactly {@code sequence} (the id's first byte is byte 7 of the record). */
    private static byte[] withIdBytes(int[] sequence) {
        java.io.ByteArrayOutputStream out = new java.io.ByteArrayOutputStream();
        out.writeBytes("{\"id\":\"".getBytes(StandardCharsets.UTF_8));
        for (int b : sequence) {
            out.write(b);
        }
        out.writeBytes(event("id", null).replaceFirst("\\{", "\",").getBytes(StandardCharsets.UTF_8));
        return out.toByteArray();
    }

    @Test
    void numericStringsAndBooleansAreCoded() {
        DecodedEvent e = decode(event("age", "\"35\"").replace("\"yes\"", "true")).event();
        assertArrayEquals(new double[] {1, 1, 3.5, 0, 1, 0, 1}, e.row(), 1e-12);
    }

    @Test
    void everyDocumentedReasonIsKebabCase() {
        for (String reason : RejectReason.ALL) {
            assertTrue(reason.matches("[a-z]+(-[a-z]+)*"), reason);
        }
    }
}
