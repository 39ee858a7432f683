package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * Decoding cost per record, house-scenario records (id, collection time, result, region, household
 * contact, travel, age band; about 160 bytes), one monitor with a split and three terms: the tree path
 * ({@link RecordParser} then the decoder as it was, {@link LegacyTreeDecoder}) against the streaming
 * {@link RecordScanner} with {@link EventDecoder}. Writes {@code target/benchmark-decode.md}. Run with
 * {@code mvn -Pbench -pl ingest verify -Dtest=DecodeBenchmarkTest -Dsurefire.failIfNoSpecifiedTests=false}.
 */
@Tag("benchmark")
class DecodeBenchmarkTest {

    private static final int RECORDS = Integer.getInteger("oddswatch.bench.decodeRecords", 1_000_000);
    private static final int ROUNDS = 5;
    private static final String[] AGE_BANDS = {"0-17", "18-39", "40-64", "65+"};
    private static final String[] REGIONS = {"north", "south", "east"};

    static final String DEFINITION = String.join("\n",
            "monitors:",
            "  - name: respiratory",
            "    input: {topic: clinic-tests}",
            "    event:",
            "      id: /id",
            "      time: /collectedAt",
            "      outcome: {field: /result, positive: [positive], negative: [negative]}",
            "    split: {field: /region}",
            "    terms:",
            "      - {name: household_contact, field: /exposure/household, kind: binary, watched: true}",
            "      - {name: recent_travel, field: /exposure/travel, kind: binary, watched: true}",
            "      - name: age_band",
            "        field: /ageBand",
            "        kind: categorical",
            "        levels: ['0-17', '18-39', '40-64', '65+']",
            "        reference: '18-39'",
            "    window: {width: P28D, step: P7D}",
            "");

    private static byte[][] records(int count) {
        Random random = new Random(11);
        Instant start = Instant.parse("2026-01-05T00:00:00Z");
        byte[][] records = new byte[count][];
        for (int i = 0; i < count; i++) {
            String json = "{\"id\":\"t-11-" + i + "\",\"collectedAt\":\"" + start.plusSeconds(i * 7L) + "\",\"result\":\""
                    + (random.nextDouble() < 0.2 ? "positive" : "negative") + "\",\"region\":\"" + REGIONS[i % 3]
                    + "\",\"exposure\":{\"household\":\"" + (random.nextDouble() < 0.3 ? "yes" : "no")
                    + "\",\"travel\":\"" + (random.nextDouble() < 0.2 ? "yes" : "no") + "\"},\"ageBand\":\""
                    + AGE_BANDS[random.nextInt(4)] + "\"}";
            records[i] = json.getBytes(StandardCharsets.UTF_8);
        }
        return records;
    }

    @Test
    void nanosecondsPerRecord() throws Exception {
        MonitorDefinition monitor = DefinitionLoader.parse("bench.yaml", DEFINITION, Map.of(), null).monitors().get(0);
        RecordLimits limits = RecordLimits.defaults();
        byte[][] records = records(RECORDS);
        RecordParser parser = new RecordParser(limits);
        LegacyTreeDecoder legacy = new LegacyTreeDecoder(monitor);
        RecordScanner scanner = new RecordScanner(limits, List.of(monitor));
        EventDecoder decoder = new EventDecoder(monitor);

        double[] tree = new double[ROUNDS];
        double[] scan = new double[ROUNDS];
        long sink = 0;
        for (int round = 0; round < ROUNDS; round++) {
            long t0 = System.nanoTime();
            for (byte[] record : records) {
                EventDecoder.Result result = legacy.decode(parser.parse(record).tree());
                sink += result.event().timeMillis();
            }
            long t1 = System.nanoTime();
            for (byte[] record : records) {
                EventDecoder.Result result = decoder.decode(scanner.scan(record).record());
                sink -= result.event().timeMillis();
            }
            long t2 = System.nanoTime();
            tree[round] = (t1 - t0) / (double) records.length;
            scan[round] = (t2 - t1) / (double) records.length;
        }
        assertEquals(0, sink, "both paths decode the same times");
        java.util.Arrays.sort(tree);
        java.util.Arrays.sort(scan);
        String report = String.format(java.util.Locale.ROOT, """
                # Decode benchmark

                %d house-scenario records (about %d bytes each), one monitor (split, three terms), %d rounds
                after none of warm-up beyond the rounds themselves; best and median ns per record (parse,
                read the fields, code the row). %d available processors, shared machine.

                | path | best ns/record | median ns/record |
                |---|---:|---:|
                | tree: RecordParser + JsonNode.at (before) | %.0f | %.0f |
                | streaming: RecordScanner + EventDecoder (after) | %.0f | %.0f |
                | speed-up (best) | %.2f | |
                """, records.length, records[0].length, ROUNDS, Runtime.getRuntime().availableProcessors(),
                tree[0], tree[ROUNDS / 2], scan[0], scan[ROUNDS / 2], tree[0] / scan[0]);
        System.out.println(report);
        write(Path.of("target", "benchmark-decode.md"), report);
    }

    private static void write(Path file, String text) throws IOException {
        Files.createDirectories(file.getParent());
        Files.writeString(file, text);
    }
}
