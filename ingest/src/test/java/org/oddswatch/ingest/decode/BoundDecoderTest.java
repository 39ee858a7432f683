package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.charset.StandardCharsets;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.RecordLimits;

class BoundDecoderTest {

    private static final List<String> RECORDS = List.of(
            "{\"id\":\"a-1\",\"collectedAt\":\"2026-02-03T09:30:00Z\",\"result\":\"positive\",\"region\":\"north\","
                    + "\"exposure\":{\"household\":\"yes\",\"travel\":\"no\"},\"ageBand\":\"65+\"}",
            // other member order and extra members: a different path through the scanner
            "{\"ageBand\":\"0-17\",\"note\":[1,2,{\"x\":null}],\"exposure\":{\"travel\":\"yes\",\"household\":\"no\"},"
                    + "\"region\":\"south\",\"result\":\"negative\",\"collectedAt\":1767225600000,\"id\":42}",
            "{\"id\":\"a-3\",\"collectedAt\":\"not a time\",\"result\":\"positive\",\"region\":\"north\"}",
            "{\"id\":\"a-4\",\"collectedAt\":\"2026-02-03T09:30:00Z\",\"result\":\"maybe\",\"region\":\"north\"}",
            "{\"id\":\"a-5\",\"collectedAt\":\"2026-02-03T09:30:00Z\",\"result\":\"negative\",\"region\":\"west\","
                    + "\"exposure\":{\"household\":\"yes\"},\"ageBand\":\"unknown\"}",
            "[1, 2]");

    @Test
    void readersOnSeparateScannersDecodeAlternatelyExactlyAsTheSharedDecoder() throws Exception {
        MonitorDefinition monitor = DefinitionLoader.parse("bound.yaml", DecodeBenchmarkTest.DEFINITION, Map.of(), null)
                .monitors().get(0);
        EventDecoder decoder = new EventDecoder(monitor);
        RecordScanner first = new RecordScanner(RecordLimits.defaults(), List.of(monitor));
        RecordScanner second = new RecordScanner(RecordLimits.defaults(), List.of(monitor));
        RecordScanner reference = new RecordScanner(RecordLimits.defaults(), List.of(monitor));
        EventDecoder.Bound onFirst = decoder.boundTo(first);
        EventDecoder.Bound onSecond = decoder.boundTo(second);
        for (int round = 0; round < 3; round++) {
            for (String json : RECORDS) {
                byte[] bytes = json.getBytes(StandardCharsets.UTF_8);
                String expected = describe(reference, decoder::decode, bytes);
                assertEquals(expected, describe(first, onFirst::decode, bytes), json);
                assertEquals(expected, describe(second, onSecond::decode, bytes), json);
                // a bound decoder given another scanner's record falls back to the shared path
                assertEquals(expected, describe(second, onFirst::decode, bytes), json);
            }
        }
    }

    private static String describe(RecordScanner scanner, java.util.function.Function<EventRecord, EventDecoder.Result> decode,
                                   byte[] bytes) {
        RecordScanner.Scanned scanned = scanner.scan(bytes);
        if (!scanned.ok()) {
            return "unreadable " + scanned.rejection();
        }
        EventDecoder.Result result = decode.apply(scanned.record());
        if (!result.ok()) {
            return "rejected " + result.rejection();
        }
        DecodedEvent e = result.event();
        return e.id() + " " + e.timeMillis() + " " + e.positive() + " " + e.splitValue() + " "
                + java.util.Arrays.toString(e.row()) + " " + e.stratum() + " " + e.missingDetail();
    }
}
