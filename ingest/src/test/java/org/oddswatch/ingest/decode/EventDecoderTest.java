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

    private Decoding decode(String json) {
        return decode(json.getBytes(StandardCharsets.UTF_8));
    }

    private Decoding decode(byte[] json) {
        try {
            return decoder.decode(parser.parse(json));
        } catch (UnreadableRecordException e) {
            throw new AssertionError("parse failed: " + e.rejection(), e);
        }
    }

    private String decodeReason(String json) {
        Decoding result = decode(json);
        assertFalse(result.ok(), json);
        return result.rejection().reason();
    }

    @Test
    void decodesACompleteEvent() {
        Decoding result = decode(event("id", "\"e1\""));
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
        Decoding result = decode(event("sex", "\"other\""));
        assertTrue(result.rejection().detail().startsWith("sex: "), result.rejection().detail());
    }

    /** A missing covariate (ingest/README.md) is accepted and left out of the fit. */
    @Test
    void missingCovariatesAreAcceptedWithoutARow() {
        for (String json : new String[] {event("age", null), event("age", "null"), event("ageBand", "\"unknown\""),
                event("exposure", "{}"), event("sex", "\"\"")}) {
            Decoding result = decode(json);
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
            Decoding result = decode(event("age", age));
            assertTrue(result.ok(), age);
            assertNull(result.event().row(), age);
            assertTrue(result.event().missingDetail().startsWith("age_years: "), result.event().missingDetail());
            assertTrue(result.event().missingDetail().endsWith("(taken as missing)"), result.event().missingDetail());
            assertEquals(2, result.event().stratum(), "still counted in its stratum");
        }
        // A later term's rejection still rejects the event.
        assertEquals(RejectReason.UNKNOWN_LEVEL, decodeReason(event("age", "\"old\"").replace("\"male\"", "\"x\"")));
    }

    /**
     * Numeric ids keep the digits the parser read: 1.5 and 1.50 are different events; a whole number
     * is its value (-0 is 0); an exponent is written in BigDecimal's form. Source: the JDK's
     * {@link java.math.BigDecimal#toString()} (scientific notation for 1e3 is "1E+3").
     */
    @Test
    void numericIdsAndSplitValuesKeepTheirDigitsAndMustBeFinite() {
        assertEquals("0", decode(event("id", "0")).event().id());
        assertEquals("0", decode(event("id", "-0")).event().id(), "a whole number is its value");
        assertEquals("1.50", decode(event("id", "1.50")).event().id());
        assertEquals("1.5", decode(event("id", "1.5")).event().id());
        assertEquals("1E+3", decode(event("id", "1e3")).event().id());
        assertEquals("1000", decode(event("id", "1000")).event().id());
        assertEquals("12345678901234567890123", decode(event("id", "12345678901234567890123")).event().id());
        for (String bad : new String[] {"1e400", "7e400", "-1e400"}) {
            String text = new java.math.BigDecimal(bad).toString();
            Decoding id = decode(event("id", bad));
            assertEquals(RejectReason.BAD_ID, id.rejection().reason(), bad);
            assertTrue(id.rejection().detail().contains("beyond the range of a double (" + text + ")"),
                    id.rejection().detail());
            assertEquals(RejectReason.BAD_ID, decodeReason(event("region", bad)), bad);
        }
        assertEquals("7", decode(event("region", "7")).event().splitValue());
        assertEquals("7", decode(event("region", "7.0")).event().splitValue(), "a whole value as its digits");
        assertEquals("7.5", decode(event("region", "7.5")).event().splitValue());
        Decoding surrogate = decode(event("id", "\"a\\ud800\""));
        assertEquals(RejectReason.BAD_ID, surrogate.rejection().reason());
        assertEquals(RejectReason.BAD_ID, decode(event("region", "\"\\udc00x\"")).rejection().reason());
        assertEquals("a\uD83D\uDE00", decode(event("id", "\"a\\ud83d\\ude00\"")).event().id(), "a pair is fine");
    }

    /** Times given as numbers: whole epoch milliseconds only, also written with a fraction or exponent. */
    @Test
    void numericTimesMustBeWholeMilliseconds() {
        assertEquals(1_770_000_000_000L, decode(event("collectedAt", "1.77e12")).event().timeMillis());
        assertEquals(1_770_000_000_000L, decode(event("collectedAt", "1770000000000.0")).event().timeMillis());
        Decoding fraction = decode(event("collectedAt", "1.5"));
        assertEquals(new Rejection(RejectReason.BAD_TIME, "time 1.5 is not whole epoch milliseconds"),
                fraction.rejection());
        assertEquals(RejectReason.BAD_TIME, decodeReason(event("collectedAt", "1e400")));
        assertEquals(new Rejection(RejectReason.BAD_TIME, "time 99999999999999999999999 is out of range"),
                decode(event("collectedAt", "99999999999999999999999")).rejection());
    }

    /** One parsed record serves every monitor reading the input; each reads its own fields. */
    @Test
    void oneTreeServesEveryMonitor() throws Exception {
        MonitorDefinition odd = DefinitionLoader.parse("odd.yaml", String.join("\n",
                "monitors:",
                "  - name: odd",
                "    input: {topic: clinic-tests}",
                "    event:",
                "      id: /meta/ids/0",
                "      time: /a~1b",
                "      outcome: {field: /c~0d}",
                "    window: {width: P28D, step: P7D}",
                ""), Map.of(), null).monitors().get(0);
        com.fasterxml.jackson.databind.JsonNode tree = parser.parse((event("id", "\"e1\"").replaceFirst("\\{",
                "{\"meta\":{\"ids\":[\"o1\"]},\"a/b\":1770000000000,\"c~d\":\"positive\",")).getBytes(StandardCharsets.UTF_8));
        assertEquals("e1", decoder.decode(tree).event().id());
        DecodedEvent other = new EventDecoder(odd).decode(tree).event();
        assertEquals("o1", other.id());
        assertEquals(1_770_000_000_000L, other.timeMillis());
        assertEquals(new Rejection(RejectReason.MISSING_FIELD, "no event id at /meta/ids/0"),
                new EventDecoder(odd).decode(parser.parse(event("id", "\"e1\"").getBytes(StandardCharsets.UTF_8)))
                        .rejection());
    }

    @Test
    void numericStringsAndBooleansAreCoded() {
        DecodedEvent e = decode(event("age", "\"35\"").replace("\"yes\"", "true")).event();
        assertArrayEquals(new double[] {1, 1, 3.5, 0, 1, 0, 1}, e.row(), 1e-12);
    }

    @Test
    void everyDocumentedReasonIsKebabCase() throws IllegalAccessException {
        for (java.lang.reflect.Field reason : RejectReason.class.getFields()) {
            assertTrue(((String) reason.get(null)).matches("[a-z]+(-[a-z]+)*"), reason.getName());
        }
        assertEquals(15, RejectReason.class.getFields().length, "the reason codes, late and duplicate included");
    }
}
