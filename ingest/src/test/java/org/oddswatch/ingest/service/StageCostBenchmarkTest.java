package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.decode.EventDecoder;
import org.oddswatch.ingest.decode.RecordParser;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.pipeline.RecordOutcome;

/**
 * The cost of each stage of the service's record path, on one thread and without Kafka
 * ({@code mvn -B -Pbench -pl ingest verify -Dtest=StageCostBenchmarkTest -Dsurefire.failIfNoSpecifiedTests=false};
 * writes {@code target/benchmark-stages.md}): the benchmark's house-scenario events in batches of
 * 25,000 (about one 4 MiB fetch), (1) a bare Jackson token walk of each record, for scale, (2)
 * {@link RecordParser#parse} alone, (3) parse and {@link EventDecoder#decode}, (4)
 * {@link MonitorPipeline#offer} (parse, decode, then time rules, dedupe, windows, fits; a listener
 * that does nothing): the apply step alone costs (4) minus (3). Thread CPU time and bytes allocated per record, lowest of the rounds (thread CPU
 * leaves out time the thread was not running; the machine is shared).
 */
@Tag("benchmark")
class StageCostBenchmarkTest {

    private static final int EVENTS = Integer.getInteger("oddswatch.bench.events", 1_000_000);
    private static final int BATCH = 25_000;
    private static final int ROUNDS = 8;
    private static final String TOPIC = "bench-tests";

    private static long cpu() {
        return java.lang.management.ManagementFactory.getThreadMXBean().getCurrentThreadCpuTime();
    }

    private static long allocated() {
        return ((com.sun.management.ThreadMXBean) java.lang.management.ManagementFactory.getThreadMXBean())
                .getCurrentThreadAllocatedBytes();
    }

    @Test
    void nanosecondsPerRecordByStage() throws IOException {
        List<TestFeed.Event> events = TestFeed.events(3, EVENTS, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(140), Duration.ofHours(6), "north", "south", "west");
        List<List<byte[]>> batches = new ArrayList<>();
        for (int i = 0; i < events.size(); i += BATCH) {
            List<byte[]> batch = new ArrayList<>();
            for (TestFeed.Event e : events.subList(i, Math.min(events.size(), i + BATCH))) {
                batch.add(e.json());
            }
            batches.add(batch);
        }
        MonitorConfig config = TestDefinitions.config(TestDefinitions.yaml("127.0.0.1:9", TOPIC, "bench", "bench-group",
                8, "P3650D"));
        String[] stages = {"Jackson token walk, a parser per record (for scale)", "parse (`RecordParser.parse`)",
                "parse and decode (`EventDecoder.decode`)", "parse, decode and apply (`MonitorPipeline.offer`)"};
        double[][] cpuNanos = new double[stages.length][ROUNDS];
        double[][] bytes = new double[stages.length][ROUNDS];
        JsonFactory factory = new JsonFactory();
        for (int round = 0; round < ROUNDS; round++) {
            long[] c = new long[stages.length + 1];
            long[] a = new long[stages.length + 1];
            c[0] = cpu();
            a[0] = allocated();
            long tokens = 0;
            for (List<byte[]> batch : batches) {
                for (byte[] value : batch) {
                    try (JsonParser parser = factory.createParser(value)) {
                        JsonToken token;
                        while ((token = parser.nextToken()) != null) {
                            if (token == JsonToken.VALUE_STRING) {
                                parser.getTextLength();
                            }
                            tokens++;
                        }
                    }
                }
            }
            c[1] = cpu();
            a[1] = allocated();
            RecordParser parser = new RecordParser(config.limits());
            long parsed = 0;
            for (List<byte[]> batch : batches) {
                for (byte[] value : batch) {
                    parsed += parse(parser, value).isObject() ? 1 : 0;
                }
            }
            c[2] = cpu();
            a[2] = allocated();
            EventDecoder decoder = new EventDecoder(config.monitorsFor(TOPIC).get(0));
            long decoded = 0;
            for (List<byte[]> batch : batches) {
                for (byte[] value : batch) {
                    decoded += decoder.decode(parse(parser, value)).ok() ? 1 : 0;
                }
            }
            c[3] = cpu();
            a[3] = allocated();
            MonitorPipeline pipeline = new MonitorPipeline(TOPIC + "-0", config.monitorsFor(TOPIC), new PipelineListener() {
            }, PipelineSettings.defaults().withLimits(config.limits()));
            long accepted = 0;
            for (int b = 0; b < batches.size(); b++) {
                List<byte[]> batch = batches.get(b);
                for (int i = 0; i < batch.size(); i++) {
                    RecordOutcome outcome = pipeline.offer(batch.get(i), RecordOrigin.kafka(TOPIC, 0, (long) b * BATCH + i),
                            false);
                    accepted += outcome.outcome() == Outcome.ACCEPTED ? 1 : 0;
                }
            }
            c[4] = cpu();
            a[4] = allocated();
            assertEquals(19L * EVENTS, tokens, "19 tokens per record");
            assertEquals(EVENTS, parsed, "every record parsed");
            assertEquals(EVENTS, decoded, "every record decoded");
            assertEquals(EVENTS, accepted, "every record accepted");
            for (int s = 0; s < stages.length; s++) {
                cpuNanos[s][round] = (c[s + 1] - c[s]) / (double) EVENTS;
                bytes[s][round] = (a[s + 1] - a[s]) / (double) EVENTS;
            }
        }
        StringBuilder report = new StringBuilder(String.format(Locale.ROOT, """
                # Stage costs

                %d house-scenario records (%d bytes the first), batches of %d, one thread, no Kafka;
                %d rounds, the first ones warm the JIT. Lowest thread CPU per record and bytes
                allocated per record (median). %d available processors, shared machine.

                | stage | CPU ns/record (lowest) | CPU ns/record (median) | bytes/record |
                |---|---:|---:|---:|
                """, EVENTS, events.get(0).json().length, BATCH, ROUNDS,
                Runtime.getRuntime().availableProcessors()));
        for (int s = 0; s < stages.length; s++) {
            report.append(String.format(Locale.ROOT, "| %s | %.0f | %.0f | %.0f |%n", stages[s], BenchStats.lowest(cpuNanos[s]),
                    BenchStats.median(cpuNanos[s]), BenchStats.median(bytes[s])));
        }
        report.append(String.format(Locale.ROOT, "%nDecoding alone (parse and decode minus parse): %.0f ns/record (lowest"
                + " of each).%n", BenchStats.lowest(cpuNanos[2]) - BenchStats.lowest(cpuNanos[1])));
        System.out.println(report);
        Files.createDirectories(Path.of("target"));
        Files.writeString(Path.of("target", "benchmark-stages.md"), report);
    }



    private static com.fasterxml.jackson.databind.JsonNode parse(RecordParser parser, byte[] value) {
        try {
            return parser.parse(value);
        } catch (org.oddswatch.ingest.decode.UnreadableRecordException e) {
            throw new AssertionError(e.rejection().toString(), e);
        }
    }
}
