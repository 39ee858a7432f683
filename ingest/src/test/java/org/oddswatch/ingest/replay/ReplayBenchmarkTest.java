package org.oddswatch.ingest.replay;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.ingest.pipeline.HouseEvents;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.RecordOrigin;

/**
 * Replay rate from a JSON Lines file, and the in-memory rate of the pipeline alone (parse, decode,
 * validate, window update, window closing with fits). Run with {@code mvn -Pbench -pl ingest verify}.
 */
@Tag("benchmark")
class ReplayBenchmarkTest {

    private static final int EVENTS = 400_000;
    private static final long WEEK = 7 * 86_400_000L;

    @TempDir
    Path dir;

    @Test
    void replayAndPipelineRates() throws Exception {
        List<String> lines = HouseEvents.generate(1, EVENTS, Instant.parse("2026-01-05T00:00:00Z"), 20 * WEEK,
                3_600_000L, "north", "south", "east");
        Path input = dir.resolve("events.jsonl");
        Files.write(input, lines, StandardCharsets.UTF_8);
        Path definition = Path.of(ReplayBenchmarkTest.class.getResource("/replay/replay.yaml").toURI());
        List<byte[]> records = new ArrayList<>(lines.size());
        for (String line : lines) {
            records.add(line.getBytes(StandardCharsets.UTF_8));
        }
        var config = org.oddswatch.ingest.definition.DefinitionLoader.load(definition);

        java.lang.management.ThreadMXBean threads = java.lang.management.ManagementFactory.getThreadMXBean();
        for (int round = 0; round < 3; round++) {
            long cpu = threads.getCurrentThreadCpuTime();
            long start = System.nanoTime();
            ReplaySummary summary = ReplayRunner.run(ReplayRequest.of(definition, input, dir.resolve("out" + round)));
            double replaySeconds = (System.nanoTime() - start) / 1e9;
            double replayCpu = (threads.getCurrentThreadCpuTime() - cpu) / 1e9;
            assertEquals(EVENTS, summary.records().consumed());

            MonitorPipeline pipeline = new MonitorPipeline("bench", config.monitors(), new PipelineListener() { },
                    PipelineSettings.defaults());
            cpu = threads.getCurrentThreadCpuTime();
            start = System.nanoTime();
            long accepted = 0;
            for (int i = 0; i < records.size(); i++) {
                if (pipeline.offer(records.get(i), RecordOrigin.line(i + 1), false).outcome() == Outcome.ACCEPTED) {
                    accepted++;
                }
            }
            pipeline.closeAll();
            double pipelineSeconds = (System.nanoTime() - start) / 1e9;
            double pipelineCpu = (threads.getCurrentThreadCpuTime() - cpu) / 1e9;
            assertEquals(summary.records().outcome(Outcome.ACCEPTED), accepted);
            System.out.printf("round %d: replay from JSON Lines %.0f events/s wall (%.2f s), %.0f events per CPU second;"
                    + " pipeline in memory %.0f events/s wall (%.2f s), %.0f events per CPU second; %d events,"
                    + " %d final windows%n", round, EVENTS / replaySeconds, replaySeconds, EVENTS / replayCpu,
                    EVENTS / pipelineSeconds, pipelineSeconds, EVENTS / pipelineCpu, EVENTS, summary.finalWindows());
        }
    }
}
