package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * Decoding cost per record, house-scenario records (id, collection time, result, region, household
 * contact, travel, age band; about 160 bytes), one monitor with a split and three terms: parsing into
 * a tree ({@link RecordParser}) alone, and parsing then decoding ({@link EventDecoder}), the one path
 * every record takes. Writes {@code target/benchmark-decode.md}. Run with
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
        EventDecoder decoder = new EventDecoder(monitor);

        double[] parse = new double[ROUNDS];
        double[] decode = new double[ROUNDS];
        long sink = 0;
        for (int round = 0; round < ROUNDS; round++) {
            long parsed = 0;
            long decoded = 0;
            long t0 = System.nanoTime();
            for (byte[] record : records) {
                parsed += parser.parse(record).size();
            }
            long t1 = System.nanoTime();
            for (byte[] record : records) {
                Decoding result = decoder.decode(parser.parse(record));
                decoded += result.ok() ? 1 : 0;
                sink += result.event().timeMillis();
            }
            long t2 = System.nanoTime();
            assertEquals(6L * records.length, parsed, "six top-level members per record");
            assertEquals(records.length, decoded, "every record decodes");
            parse[round] = (t1 - t0) / (double) records.length;
            decode[round] = (t2 - t1) / (double) records.length;
        }
        java.util.Arrays.sort(parse);
        java.util.Arrays.sort(decode);
        String report = String.format(java.util.Locale.ROOT, """
                # Decode benchmark

                %d house-scenario records (about %d bytes each), one monitor (split, three terms), %d rounds
                (the first ones warm the JIT); best and median ns per record. %d available processors,
                shared machine.

                | step | best ns/record | median ns/record |
                |---|---:|---:|
                | parse into a tree (`RecordParser`) | %.0f | %.0f |
                | parse and decode (`RecordParser` + `EventDecoder`) | %.0f | %.0f |
                """, records.length, records[0].length, ROUNDS, Runtime.getRuntime().availableProcessors(),
                parse[0], parse[ROUNDS / 2], decode[0], decode[ROUNDS / 2]);
        System.out.println(report + "(checksum " + sink + ")");
        write(Path.of("target", "benchmark-decode.md"), report);
    }

    private static void write(Path file, String text) throws IOException {
        Files.createDirectories(file.getParent());
        Files.writeString(file, text);
    }
}
