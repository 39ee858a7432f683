package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.core.JsonPointer;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * The streaming scanner against the tree path it replaces: every record of a corpus of valid,
 * odd and broken records must give the same parse rejection, or the same decode result (reason,
 * detail, id, time, outcome, split value, coded row, stratum), as {@link RecordParser} followed by
 * {@link LegacyTreeDecoder} (the decoder as it was). Plus direct checks of the pointer trie.
 */
class RecordScannerTest {

    private static final RecordLimits LIMITS = new RecordLimits(400, 5);

    /** A second monitor on odd pointers: array elements, escaped names (~1 is '/', ~0 is '~'). */
    static final String ODD_POINTERS = String.join("\n",
            "monitors:",
            "  - name: odd",
            "    input: {topic: clinic-tests}",
            "    event:",
            "      id: /meta/ids/0",
            "      time: /a~1b",
            "      outcome: {field: /c~0d}",
            "    split: {field: /list/1/name}",
            "    terms:",
            "      - {name: score, field: /x/01, kind: numeric}",
            "      - {name: flag, field: /list/0, kind: binary}",
            "    window: {width: P28D, step: P7D}",
            "");

    private static MonitorDefinition load(String yaml) {
        try {
            return DefinitionLoader.parse("test.yaml", yaml, Map.of(), null).monitors().get(0);
        } catch (Exception e) {
            throw new AssertionError(e);
        }
    }

    private final MonitorDefinition main = load(EventDecoderTest.DEFINITION);
    private final MonitorDefinition odd = load(ODD_POINTERS);
    private final RecordParser parser = new RecordParser(LIMITS);
    private final RecordScanner scanner = new RecordScanner(LIMITS, List.of(main, odd));

    private static final String BASE = "{\"id\":\"e1\",\"collectedAt\":\"2026-02-03T09:30:00Z\",\"result\":\"positive\","
            + "\"region\":\"north\",\"exposure\":{\"household\":\"yes\"},\"age\":42,\"ageBand\":\"40-64\",\"sex\":\"male\"}";

    /** BASE with one member's value replaced (the member is appended if absent). */
    private static String with(String member, String value) {
        String marker = "\"" + member + "\":";
        int at = BASE.indexOf(marker);
        if (at < 0) {
            return BASE.substring(0, BASE.length() - 1) + "," + marker + value + "}";
        }
        int start = at + marker.length();
        int depth = 0;
        int end = start;
        boolean inString = false;
        for (; end < BASE.length(); end++) {
            char c = BASE.charAt(end);
            if (inString) {
                inString = c != '"';
            } else if (c == '"') {
                inString = true;
            } else if (c == '{' || c == '[') {
                depth++;
            } else if (c == '}' || c == ']') {
                if (depth == 0) {
                    break;
                }
                depth--;
            } else if (c == ',' && depth == 0) {
                break;
            }
        }
        return BASE.substring(0, start) + value + BASE.substring(end);
    }

    private static List<String> corpus() {
        List<String> records = new ArrayList<>();
        records.add(BASE);
        String[][] variants = {
            {"id", "7", "7.5", "1e3", "-0.0", "123456789012345678901234567890", "true", "false", "null", "\"\"", "{}",
                "[]", "[1]", "\"\\u00e9t\\u00e9\""},
            {"collectedAt", "1770000000000", "1.77e12", "1.5", "\"17700\"", "\" 2026-02-03T09:30:00+01:00 \"",
                "\"2026-02-03T09:30:00\"", "\"bad\"", "true", "{}", "[]", "99999999999999999999999", "1e400", "-5",
                "\"-17\"", "\"\"", "null"},
            {"result", "\"negative\"", "true", "false", "1", "0", "1.0", "0.0", "2", "\"x\"", "[]", "{}", "null",
                "\"\"", "\"true\"", "1e20", "123456789012345678901"},
            {"region", "5", "5.0", "5.5", "1e15", "1e14", "{}", "[]", "null", "\"\"", "true", "\"s\\u00fcd\""},
            {"exposure", "{\"household\":true}", "{\"household\":1}", "{\"household\":0}", "{\"household\":[]}",
                "{\"household\":{}}", "\"yes\"", "[]", "{\"household\":\"maybe\"}", "{\"household\":null}",
                "{\"household\":\"\"}", "{\"travel\":\"yes\"}", "{\"household\":\"no\",\"deep\":{\"a\":[1,{\"b\":2}]}}",
                "{\"household\":1.0}", "{\"household\":\"true\"}"},
            {"age", "42.5", "\"42\"", "\"x\"", "true", "1e400", "99999999999999999999999", "null", "\"\"", "[]", "{}",
                "-0", "4.2E1"},
            {"ageBand", "\"65+\"", "\"other\"", "3", "null", "\"\"", "[\"65+\"]"},
            {"sex", "\"female\"", "\"other\"", "null", "\"\"", "1"},
            {"extra", "{\"a\":[1,2,{\"b\":\"c\\\"d\\\\e\\n\"}],\"e\":null}", "\"\\ud83d\\ude00\"", "[[[]]]",
                "12345678901234567890123456789", "-1.5e-7"},
        };
        for (String[] variant : variants) {
            for (int v = 1; v < variant.length; v++) {
                records.add(with(variant[0], variant[v]));
            }
        }
        // members removed
        for (String member : List.of("id", "collectedAt", "result", "region", "exposure", "age", "ageBand", "sex")) {
            records.add(BASE.replaceFirst("\"" + member + "\":(\\{[^}]*\\}|\"[^\"]*\"|[0-9]+),?", ""));
        }
        // duplicate members: the last one wins, as in the tree
        records.add(BASE.replace("}", ",\"result\":\"negative\"}").replaceFirst("\\},\"result", "},\"result"));
        records.add(BASE.substring(0, BASE.length() - 1) + ",\"exposure\":5}");
        records.add(BASE.substring(0, BASE.length() - 1) + ",\"exposure\":{\"travel\":\"yes\"}}");
        records.add(BASE.substring(0, BASE.length() - 1) + ",\"exposure\":{\"household\":\"no\"}}");
        records.add(BASE.substring(0, BASE.length() - 1) + ",\"id\":\"e2\",\"id\":{}}");
        // the odd-pointer monitor's fields
        records.add("{\"meta\":{\"ids\":[\"o1\",\"o2\"]},\"a/b\":\"2026-02-03T09:30:00Z\",\"c~d\":\"positive\","
                + "\"list\":[\"yes\",{\"name\":\"west\"}],\"x\":{\"01\":3.5}}");
        records.add("{\"meta\":{\"ids\":{\"0\":\"o1\"}},\"a/b\":1770000000000,\"c~d\":\"negative\","
                + "\"list\":{\"0\":\"no\",\"1\":{\"name\":7}},\"x\":[1,2]}");
        records.add("{\"meta\":{\"ids\":[]},\"a~1b\":\"2026-02-03T09:30:00Z\",\"c~0d\":\"positive\"}");
        records.add("{\"meta\":{\"ids\":[[\"o1\"]]},\"a/b\":\"2026-02-03T09:30:00Z\",\"c~d\":\"positive\","
                + "\"list\":[\"yes\",{\"name\":\"west\"},3],\"x\":{\"1\":3.5,\"01\":\"4\"}}");
        records.add("{\"meta\":{\"ids\":[\"o1\"]},\"meta\":{\"ids\":[\"o9\"]},\"a/b\":\"2026-02-03T09:30:00Z\","
                + "\"c~d\":\"positive\",\"list\":[true,{\"name\":\"west\"}]}");
        // broken or capped records: every one must be rejected exactly as the tree parser rejects it
        records.addAll(List.of(
                BASE + " x", BASE + "{}", BASE + " ", " " + BASE, BASE + "\n", BASE.replace("\"sex\"", "sex"),
                BASE.replace("}", ",}"), BASE.substring(0, BASE.length() - 1), BASE.substring(0, 40),
                with("extra", "\"unterminated"), with("extra", "\"bad \\q escape\""), with("extra", "01"),
                with("extra", "NaN"), with("extra", "[1,]"), with("extra", "\"tab\there\""),
                with("extra", "{\"a\":{\"b\":{\"c\":{\"d\":{\"e\":1}}}}}"), with("extra", "{\"a\":{\"b\":{\"c\":{\"d\":1}}}}"),
                with("exposure", "{\"household\":[[[[[\"yes\"]]]]]}"),
                with("exposure", "{\"household\":[[[[\"yes\"]]]]}"), with("extra", "\"" + "y".repeat(300) + "\""),
                with("extra", "\"" + "y".repeat(200) + "\""), "", "   ", "[]", "[" + BASE + "]", "null", "5", "\"s\"",
                "true", "{", "}", "{}", "{\"id\":1}{\"id\":2}", "{\"id\" 1}", "{'id':1}", "{\"id\":tru}",
                "{\"id\":1,\"id\":2,\"collectedAt\":1,\"result\":\"positive\",\"region\":\"r\"}"));
        return records;
    }

    @Test
    void scannerGivesTheSameResultAsTheTreeDecoderForEveryRecordOfTheCorpus() {
        List<MonitorDefinition> monitors = List.of(main, odd);
        java.util.EnumMap<RecordScanner.Path, Integer> paths = new java.util.EnumMap<>(RecordScanner.Path.class);
        for (String text : corpus()) {
            byte[] bytes = text.getBytes(StandardCharsets.UTF_8);
            compare(text, bytes, monitors, scanner);
            paths.merge(scanner.lastPath(), 1, Integer::sum);
        }
        // each path must really have been exercised, or the comparison would prove nothing about it
        assertTrue(paths.getOrDefault(RecordScanner.Path.STREAMING, 0) > 100, paths::toString);
        assertTrue(paths.getOrDefault(RecordScanner.Path.TREE, 0) > 30, paths::toString);
    }

    /** Seeded random damage to corpus records (bytes dropped, doubled, replaced): same verdicts as before. */
    @Test
    void damagedRecordsGetTheSameVerdictAsFromTheTreeDecoder() {
        java.util.Random random = new java.util.Random(20261201);
        byte[] alphabet = "{}[]\":,.-+0123456789eEtrufalsn \\/\tx\u00e9".getBytes(StandardCharsets.UTF_8);
        List<String> corpus = corpus();
        for (int i = 0; i < 20_000; i++) {
            byte[] bytes = corpus.get(random.nextInt(corpus.size())).getBytes(StandardCharsets.UTF_8);
            if (bytes.length == 0) {
                continue;
            }
            int at = random.nextInt(bytes.length);
            byte[] damaged = switch (random.nextInt(3)) {
                case 0 -> concat(java.util.Arrays.copyOf(bytes, at), java.util.Arrays.copyOfRange(bytes, at + 1, bytes.length));
                case 1 -> concat(java.util.Arrays.copyOf(bytes, at + 1), java.util.Arrays.copyOfRange(bytes, at, bytes.length));
                default -> {
                    byte[] copy = bytes.clone();
                    copy[at] = alphabet[random.nextInt(alphabet.length)];
                    yield copy;
                }
            };
            String label = "damaged #" + i + ": " + new String(damaged, StandardCharsets.UTF_8);
            compare(label, damaged, List.of(main, odd), scanner);
        }
    }

    /**
     * Batches of corpus records, damaged records, oversized and absent values, in seeded random
     * order: {@link RecordScanner#scanAll} (one parser per batch) gives every record the result
     * {@link RecordScanner#scan} gives it alone.
     */
    @Test
    void batchScanGivesEveryRecordTheResultOfScanningItAlone() {
        java.util.Random random = new java.util.Random(20261202);
        List<String> corpus = corpus();
        RecordScanner alone = new RecordScanner(LIMITS, List.of(main, odd));
        RecordScanner batched = new RecordScanner(LIMITS, List.of(main, odd));
        List<MonitorDefinition> monitors = List.of(main, odd);
        int[] streamed = new int[1];
        for (int round = 0; round < 400; round++) {
            List<byte[]> batch = new java.util.ArrayList<>();
            int size = 1 + random.nextInt(round % 10 == 0 ? 3 : 60);
            for (int i = 0; i < size; i++) {
                int pick = random.nextInt(20);
                byte[] bytes;
                if (pick == 0) {
                    bytes = null;
                } else if (pick == 1) {
                    bytes = with("extra", "\"" + "z".repeat(500) + "\"").getBytes(StandardCharsets.UTF_8); // oversized
                } else if (pick < 5) {
                    byte[] base = corpus.get(random.nextInt(corpus.size())).getBytes(StandardCharsets.UTF_8);
                    bytes = base.length == 0 ? base : concat(java.util.Arrays.copyOf(base, random.nextInt(base.length)),
                            new byte[0]); // cut short
                } else {
                    bytes = corpus.get(random.nextInt(corpus.size())).getBytes(StandardCharsets.UTF_8);
                }
                batch.add(bytes);
            }
            List<String> expected = new java.util.ArrayList<>();
            for (byte[] bytes : batch) {
                expected.add(describe(alone.scan(bytes), monitors));
            }
            List<String> actual = new java.util.ArrayList<>();
            int[] next = {0};
            batched.scanAll(batch, (index, scanned) -> {
                assertEquals(next[0]++, index, "records come in order");
                actual.add(describe(scanned, monitors));
                if (batched.lastPath() == RecordScanner.Path.SHARED_PARSER) {
                    streamed[0]++;
                }
            });
            assertEquals(expected, actual, "round " + round);
        }
        assertTrue(streamed[0] > 5_000, "most valid records came from the shared parser: " + streamed[0]);

        // A record cut in two, halves in consecutive records: joined, they would make one valid
        // object across the boundary; each half alone is malformed, and so is each here.
        byte[] whole = BASE.getBytes(StandardCharsets.UTF_8);
        for (int cut = 1; cut < whole.length; cut++) {
            List<byte[]> halves = List.of(BASE.getBytes(StandardCharsets.UTF_8), java.util.Arrays.copyOf(whole, cut),
                    java.util.Arrays.copyOfRange(whole, cut, whole.length), whole);
            List<String> expected = new java.util.ArrayList<>();
            for (byte[] bytes : halves) {
                expected.add(describe(alone.scan(bytes), monitors));
            }
            List<String> actual = new java.util.ArrayList<>();
            batched.scanAll(halves, (index, scanned) -> actual.add(describe(scanned, monitors)));
            assertEquals(expected, actual, "cut at " + cut);
        }
    }

    /**
     * The scanner first tries the member name met at the same position in the record before
     * ({@link MemberOrder}): records whose members come in shifting orders, under escaped or
     * look-alike names, with unknown and repeated members, get the tree decoder's results, and
     * repeated layouts really take the shortcut.
     */
    @Test
    void shiftingMemberOrdersGiveTheTreeDecodersResults() {
        java.util.Random random = new java.util.Random(20261203);
        List<String> members = List.of("\"id\":\"e7\"", "\"collectedAt\":\"2026-02-03T09:30:00Z\"",
                "\"result\":\"negative\"", "\"region\":\"south\"", "\"exposure\":{\"household\":\"no\",\"x\":1}",
                "\"age\":42", "\"ageBand\":\"18-39\"", "\"sex\":\"female\"");
        List<String> oddMembers = List.of("\"\\u0069d\":\"e8\"", "\"ie\":\"look-alike\"", "\"regioN\":\"east\"",
                "\"extra\":[1,{\"id\":2}]", "\"result\":\"positive\"", "\"exposure\":{\"h\\u006fusehold\":\"yes\"}",
                "\"id\":\"e9\"");
        RecordScanner fresh = new RecordScanner(LIMITS, List.of(main, odd));
        for (int i = 0; i < 3_000; i++) {
            List<String> record = new java.util.ArrayList<>(members);
            if (random.nextInt(4) == 0) {
                java.util.Collections.shuffle(record, random);
            } else if (random.nextInt(3) == 0) {
                java.util.Collections.swap(record, random.nextInt(record.size()), random.nextInt(record.size()));
            }
            if (random.nextInt(5) == 0) {
                record.add(random.nextInt(record.size() + 1), oddMembers.get(random.nextInt(oddMembers.size())));
            }
            if (random.nextInt(6) == 0) {
                record.remove(random.nextInt(record.size()));
            }
            String text = "{" + String.join(",", record) + "}";
            compare("record " + i + ": " + text, text.getBytes(StandardCharsets.UTF_8), List.of(main, odd), fresh);
        }
        assertTrue(fresh.namesMatched() > 10_000, "names matched by their remembered position: " + fresh.namesMatched());
    }

    /** An error while one record is handled is reported for that record; the batch goes on. */
    @Test
    void anErrorOnOneRecordOfABatchIsReportedForItAndTheRestAreRead() {
        byte[] good = BASE.getBytes(StandardCharsets.UTF_8);
        List<byte[]> batch = List.of(good, good, good, good);
        List<String> seen = new java.util.ArrayList<>();
        scanner.scanAll(batch, new RecordScanner.ScanSink() {
            @Override
            public void accept(int index, RecordScanner.Scanned scanned) {
                if (index == 1) {
                    throw new IllegalStateException("broken on purpose");
                }
                seen.add(index + (scanned.ok() ? " ok" : " rejected"));
            }

            @Override
            public void failed(int index, RuntimeException error) {
                seen.add(index + " failed: " + error.getMessage());
            }
        });
        assertEquals(List.of("0 ok", "1 failed: broken on purpose", "2 ok", "3 ok"), seen);
    }

    private static String describe(RecordScanner.Scanned scanned, List<MonitorDefinition> monitors) {
        if (!scanned.ok()) {
            return "unreadable " + scanned.rejection();
        }
        StringBuilder out = new StringBuilder();
        for (MonitorDefinition monitor : monitors) {
            EventDecoder.Result result = new EventDecoder(monitor).decode(scanned.record());
            if (!result.ok()) {
                out.append(" rejected ").append(result.rejection());
            } else {
                DecodedEvent e = result.event();
                out.append(' ').append(e.id()).append(' ').append(e.timeMillis()).append(' ').append(e.positive())
                        .append(' ').append(e.splitValue()).append(' ').append(java.util.Arrays.toString(e.row()))
                        .append(' ').append(e.stratum()).append(' ').append(e.missingDetail());
            }
        }
        return out.toString();
    }

    private static byte[] concat(byte[] a, byte[] b) {
        byte[] all = java.util.Arrays.copyOf(a, a.length + b.length);
        System.arraycopy(b, 0, all, a.length, b.length);
        return all;
    }

    @Test
    void bytesThatAreNotUtf8AreRejectedAsTheTreeParserRejectsThem() {
        byte[] base = with("extra", "\"AB\"").getBytes(StandardCharsets.UTF_8);
        int at = new String(base, StandardCharsets.UTF_8).indexOf("AB");
        byte[][] broken = {{(byte) 0xC3, 0x28}, {(byte) 0xFF, 0x41}, {(byte) 0xE2, (byte) 0x82}, {(byte) 0x80, 0x41},
            {0x01, 0x41}, {(byte) 0xC3, (byte) 0xA9}};
        for (byte[] pair : broken) {
            byte[] bytes = base.clone();
            bytes[at] = pair[0];
            bytes[at + 1] = pair[1];
            compare(java.util.Arrays.toString(pair), bytes, List.of(main, odd), scanner);
        }
    }

    private void compare(String label, byte[] bytes, List<MonitorDefinition> monitors, RecordScanner scanner) {
        RecordParser.Parsed parsed = parser.parse(bytes);
        RecordScanner.Scanned scanned = scanner.scan(bytes);
        assertEquals(parsed.ok(), scanned.ok(), label);
        if (!parsed.ok()) {
            assertEquals(parsed.rejection(), scanned.rejection(), label);
            return;
        }
        for (MonitorDefinition monitor : monitors) {
            EventDecoder.Result before = new LegacyTreeDecoder(monitor).decode(parsed.tree());
            EventDecoder decoder = new EventDecoder(monitor);
            assertSame(label + " [" + monitor.name() + ", scanned]", before, decoder.decode(scanned.record()));
            assertSame(label + " [" + monitor.name() + ", tree]", before, decoder.decode(parsed.tree()));
        }
    }

    private static void assertSame(String label, EventDecoder.Result before, EventDecoder.Result after) {
        assertEquals(before.rejection(), after.rejection(), label);
        if (before.event() == null) {
            assertNull(after.event(), label);
            return;
        }
        DecodedEvent b = before.event();
        DecodedEvent a = after.event();
        if (!b.id().equals(a.id())) {
            // A number as id: the scanner keeps the record's text (1e3), the tree its double (1000.0).
            assertEquals(0, new java.math.BigDecimal(b.id()).compareTo(new java.math.BigDecimal(a.id())), label);
        }
        assertEquals(b.timeMillis(), a.timeMillis(), label);
        assertEquals(b.positive(), a.positive(), label);
        assertEquals(b.splitValue(), a.splitValue(), label);
        assertArrayEquals(b.row(), a.row(), label);
        assertEquals(b.stratum(), a.stratum(), label);
        assertEquals(b.missingDetail(), a.missingDetail(), label);
    }

    @Test
    void oversizedAndTooDeepRecordsKeepTheirReasonsAndDetails() {
        RecordScanner.Scanned big = scanner.scan(with("extra", "\"" + "y".repeat(300) + "\"").getBytes(StandardCharsets.UTF_8));
        assertEquals(RejectReason.OVERSIZED, big.rejection().reason());
        assertTrue(big.rejection().detail().endsWith("bytes is more than the limit of 400"), big.rejection().detail());
        RecordScanner.Scanned deep = scanner.scan(with("extra", "{\"a\":{\"b\":{\"c\":{\"d\":{\"e\":1}}}}}")
                .getBytes(StandardCharsets.UTF_8));
        assertEquals(new Rejection(RejectReason.TOO_DEEP, "nesting deeper than 5"), deep.rejection());
        // depth 5 exactly (root, extra, a, b, c) is allowed
        assertTrue(scanner.scan(with("extra", "{\"a\":{\"b\":{\"c\":{\"d\":1}}}}").getBytes(StandardCharsets.UTF_8)).ok());
        RecordScanner.Scanned trailing = scanner.scan((BASE + " x").getBytes(StandardCharsets.UTF_8));
        assertEquals(RejectReason.MALFORMED_JSON, trailing.rejection().reason());
        assertEquals(RejectReason.MALFORMED_JSON, scanner.scan(null).rejection().reason());
    }

    /**
     * Declared outcomes and levels come back as the definition's own strings (so the decoder's
     * comparisons end at the identity check), and a time of the common shape is read while scanning;
     * undeclared values and other times are plain equal strings.
     */
    @Test
    void declaredValuesComeBackAsTheDefinitionsStringsAndTimesAreReadWhileScanning() {
        RecordScanner fresh = new RecordScanner(LIMITS, List.of(main));
        FieldValues v = fresh.scan(BASE.getBytes(StandardCharsets.UTF_8)).record().values();
        PointerTrie trie = fresh.layout();
        int result = trie.slotOf(JsonPointer.compile("/result"));
        int sex = trie.slotOf(JsonPointer.compile("/sex"));
        int time = trie.slotOf(JsonPointer.compile("/collectedAt"));
        org.junit.jupiter.api.Assertions.assertSame(main.event().outcome().positive().get(0), v.texts[result]);
        org.junit.jupiter.api.Assertions.assertSame(
                ((org.oddswatch.estimator.terms.CategoricalTerm) main.terms().stream()
                        .filter(t -> t.name().equals("sex")).findFirst().orElseThrow().term()).levels().get(1),
                v.texts[sex], "male");
        assertEquals(EventDecoder.parseTime("2026-02-03T09:30:00Z"), v.times[time]);
        assertNull(v.texts[time], "no string made for a time read while scanning");
        assertEquals("2026-02-03T09:30:00Z", v.text(time), "until one is asked for");
        assertEquals("2026-02-03T09:30:00Z", v.asText(time));
        assertFalse(v.absent(time));
        FieldValues odd = fresh.scan(with("collectedAt", "\" 2026-02-03T09:30:00Z\"").getBytes(StandardCharsets.UTF_8))
                .record().values();
        assertEquals(Long.MIN_VALUE, odd.times[time], "space around it: left to the decoder");
        FieldValues other = fresh.scan(with("sex", "\"other\"").getBytes(StandardCharsets.UTF_8)).record().values();
        assertEquals("other", other.texts[sex]);
    }

    @Test
    void trieFindsNestedMembersArrayElementsAndEscapedNames() {
        RecordScanner onPointers = RecordScanner.forPointers(LIMITS, List.of(JsonPointer.compile("/a/b"),
                JsonPointer.compile("/a"), JsonPointer.compile("/l/2"), JsonPointer.compile("/s~1t/~0u"),
                JsonPointer.compile("/a/b"), JsonPointer.compile("/n/0"), JsonPointer.compile("/f"),
                JsonPointer.compile("/t"), JsonPointer.compile("/z"), JsonPointer.compile("/big")));
        RecordScanner.Scanned scanned = onPointers.scan(("{\"a\":{\"b\":\"x\",\"c\":1},\"l\":[0,1,-2.5],"
                + "\"s/t\":{\"~u\":\"esc\"},\"n\":{\"0\":7},\"f\":false,\"t\":true,\"z\":null,"
                + "\"big\":123456789012345678901234567890}").getBytes(StandardCharsets.UTF_8));
        assertTrue(scanned.ok());
        EventRecord record = scanned.record();
        assertNull(record.tree(), "scanned, not parsed into a tree");
        FieldValues v = record.values();
        PointerTrie trie = record.layout();
        assertEquals(9, trie.size(), "a repeated pointer shares its slot");
        int ab = trie.slotOf(JsonPointer.compile("/a/b"));
        assertEquals(FieldValues.TEXT, v.kinds[ab]);
        assertEquals("x", v.texts[ab]);
        assertEquals(FieldValues.OBJECT, v.kinds[trie.slotOf(JsonPointer.compile("/a"))]);
        int l2 = trie.slotOf(JsonPointer.compile("/l/2"));
        assertEquals(FieldValues.FLOAT, v.kinds[l2]);
        assertEquals(-2.5, v.doubles[l2]);
        assertEquals("-2.5", v.asText(l2));
        assertEquals("esc", v.texts[trie.slotOf(JsonPointer.compile("/s~1t/~0u"))]);
        int n0 = trie.slotOf(JsonPointer.compile("/n/0"));
        assertEquals(FieldValues.INTEGER, v.kinds[n0], "an index segment also matches a member of that name");
        assertEquals(7, v.longs[n0]);
        assertEquals(FieldValues.FALSE, v.kinds[trie.slotOf(JsonPointer.compile("/f"))]);
        assertEquals(FieldValues.TRUE, v.kinds[trie.slotOf(JsonPointer.compile("/t"))]);
        assertEquals(FieldValues.NULL, v.kinds[trie.slotOf(JsonPointer.compile("/z"))]);
        int big = trie.slotOf(JsonPointer.compile("/big"));
        assertEquals(FieldValues.BIG_INTEGER, v.kinds[big]);
        assertEquals("123456789012345678901234567890", v.asText(big));

        // the next record reuses the values: nothing of the previous one may remain
        RecordScanner.Scanned next = onPointers.scan("{\"a\":[1],\"l\":{\"2\":true}}".getBytes(StandardCharsets.UTF_8));
        FieldValues w = next.record().values();
        assertEquals(FieldValues.MISSING, w.kinds[ab], "a value below an array is not an object member");
        assertEquals(FieldValues.ARRAY, w.kinds[trie.slotOf(JsonPointer.compile("/a"))]);
        assertEquals(FieldValues.TRUE, w.kinds[l2], "a member named 2 matches the segment 2");
        assertEquals(FieldValues.MISSING, w.kinds[big]);
    }

    @Test
    void aLaterDuplicateMemberReplacesEverythingFoundUnderTheEarlierOne() {
        RecordScanner onPointers = RecordScanner.forPointers(LIMITS, List.of(JsonPointer.compile("/a/b"),
                JsonPointer.compile("/a/c")));
        RecordScanner.Scanned scanned = onPointers.scan("{\"a\":{\"b\":1,\"c\":2},\"a\":{\"c\":3}}"
                .getBytes(StandardCharsets.UTF_8));
        FieldValues v = scanned.record().values();
        assertEquals(FieldValues.MISSING, v.kinds[0], "/a/b came from the replaced member");
        assertEquals(3, v.longs[1]);
        // as the tree does: Source: Jackson's ObjectNode keeps the last value of a repeated name
        assertFalse(new RecordParser(LIMITS).parse("{\"a\":{\"b\":1},\"a\":{\"c\":3}}".getBytes(StandardCharsets.UTF_8))
                .tree().at("/a/b").isValueNode());
    }

    @Test
    void oneScanServesEveryMonitorReadingTheInput() {
        RecordScanner.Scanned scanned = scanner.scan(BASE.getBytes(StandardCharsets.UTF_8));
        EventDecoder.Result first = new EventDecoder(main).decode(scanned.record());
        EventDecoder.Result second = new EventDecoder(odd).decode(scanned.record());
        assertTrue(first.ok(), () -> first.rejection().toString());
        assertNotNull(first.event().row());
        assertEquals("north", first.event().splitValue());
        assertEquals(new Rejection(RejectReason.MISSING_FIELD, "no event id at /meta/ids/0"), second.rejection());
    }
}
