package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;
import me.tongfei.progressbar.DelegatingProgressBarConsumer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioEvent;
import org.oddswatch.deploy.scenario.ScenarioOptions;
import org.oddswatch.ingest.baseline.BaselineBuilder;
import org.oddswatch.ingest.baseline.BaselineBuilder.BaselineRequest;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * The progress display of replay, baseline and simulate: what it counts, and that it stays off when
 * the output is not a terminal (as under the test runner) while the commands' outputs stay the same.
 */
class ProgressMeterTest {

    private static final Path EXAMPLE = Path.of("examples/respiratory.yaml");

    @TempDir
    Path dir;

    private Path events(String name, ScenarioOptions options) throws IOException {
        Path file = dir.resolve(name);
        Files.write(file, Scenario.respiratory(options).events().map(ScenarioEvent::toJson).toList(),
                StandardCharsets.UTF_8);
        return file;
    }

    private static ProgressMeter captured(me.tongfei.progressbar.ProgressBarBuilder bar, List<String> drawn) {
        return ProgressMeter.drawn(bar, new DelegatingProgressBarConsumer(drawn::add, 120));
    }

    @Test
    void aReplayBarCountsEveryByteOfItsInputAndItsTotalIsTheFileSize() throws Exception {
        Path file = events("events.jsonl", ScenarioOptions.defaults().withDuration(Duration.ofDays(7 * 6)));
        MonitorConfig definition = DefinitionLoader.load(EXAMPLE);
        List<String> drawn = new ArrayList<>();
        ProgressMeter meter = captured(ProgressMeter.fileBytes("replay", file), drawn);
        try (meter) {
            ReplayRunner.run(definition, ReplayRequest.of(EXAMPLE, file, dir.resolve("out")), meter);
        }
        long size = Files.size(file);
        assertTrue(size > 1 << 20, "a file of several read chunks: " + size);
        assertEquals(size, meter.total());
        assertEquals(size, meter.current());
        String last = drawn.get(drawn.size() - 1);
        assertTrue(last.startsWith("replay") && last.contains("100%") && last.contains(" kB"), last);
    }

    @Test
    void aBaselineBarCountsEveryByteOfACsvInput() throws Exception {
        Path jsonl = events("events.jsonl", ScenarioOptions.defaults().withDuration(Duration.ofDays(7 * 4)));
        // the same events as CSV, through the reader's other path
        Path csv = dir.resolve("events.csv");
        List<String> rows = new ArrayList<>(List.of("id,collectedAt,result"));
        for (String line : Files.readAllLines(jsonl)) {
            String id = line.replaceAll(".*\"id\":\"([^\"]*)\".*", "$1");
            rows.add(id + ",2026-01-06T00:00:00Z,negative");
        }
        Files.write(csv, rows, StandardCharsets.UTF_8);
        MonitorConfig definition = DefinitionLoader.load(EXAMPLE);
        List<String> drawn = new ArrayList<>();
        ProgressMeter meter = captured(ProgressMeter.fileBytes("baseline", csv), drawn);
        try (meter) {
            BaselineBuilder.build(definition, new BaselineRequest(csv, null, java.time.Instant.parse("2026-01-05T00:00:00Z"),
                    java.time.Instant.parse("2026-02-02T00:00:00Z"), dir.resolve("baselines"), null, false, false), meter);
        }
        assertEquals(Files.size(csv), meter.total());
        assertEquals(Files.size(csv), meter.current());
    }

    @Test
    void aSimulateBarCountsRecordsTowardsTheExpectedNumber() {
        ScenarioOptions options = ScenarioOptions.defaults().withDuration(Duration.ofDays(7 * 10)).withDefectShare(0.05);
        Scenario scenario = Scenario.respiratory(options);
        long expected = SimulateCommand.expectedRecords(scenario);
        // Source: a Poisson process of rate r over t has mean r t (2000/week x 10 weeks), and each event is
        // followed by a defect with probability 0.05: 20,000 x 1.05 = 21,000.
        assertEquals(21_000, expected);
        List<String> drawn = new ArrayList<>();
        ProgressMeter meter = captured(ProgressMeter.records("simulate", expected), drawn);
        long written = 0;
        try (meter) {
            assertEquals(expected, meter.total());
            for (Iterator<ScenarioEvent> it = meter.counting(scenario.iterator()); it.hasNext(); it.next()) {
                written++;
            }
            assertEquals(written, meter.current());
            meter.done();
        }
        // the count is random around its mean: within 4 standard deviations (sd about sqrt(21,000) = 145)
        assertTrue(Math.abs(written - expected) < 4 * Math.sqrt(expected), written + " against " + expected);
        assertEquals(written, meter.total(), "done: the total becomes the count");
        assertTrue(drawn.get(drawn.size() - 1).contains("100%"), drawn.get(drawn.size() - 1));
    }

    @Test
    void theQuietMeterCountsAndDrawsNothing() {
        ProgressMeter.QUIET.accept(5);
        Iterator<String> items = List.of("a").iterator();
        assertTrue(ProgressMeter.QUIET.counting(items) == items);
        assertEquals(-1, ProgressMeter.QUIET.current());
    }

    @Test
    void offATerminalTheCommandsDrawNoProgressAndWriteTheSameOutputs() throws IOException {
        assertFalse(ProgressOption.onTerminal(), "the test runner's output is not a terminal");
        PrintStream stdout = System.out;
        PrintStream stderr = System.err;
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        Path events = dir.resolve("events.jsonl");
        CommandLineTest.Result simulate;
        CommandLineTest.Result replay;
        CommandLineTest.Result hidden;
        CommandLineTest.Result baseline;
        CommandLineTest.Result piped;
        try {
            System.setOut(new PrintStream(out, true, StandardCharsets.UTF_8));
            System.setErr(new PrintStream(err, true, StandardCharsets.UTF_8));
            simulate = CommandLineTest.run("simulate", "--out", events.toString(), "--duration", "8w");
            replay = CommandLineTest.run("replay", "--config", EXAMPLE.toString(), "--input", events.toString(),
                    "--out", dir.resolve("a").toString());
            hidden = CommandLineTest.run("replay", "--hide-progress", "--config", EXAMPLE.toString(), "--input",
                    events.toString(), "--out", dir.resolve("b").toString());
            baseline = CommandLineTest.run("baseline", "--config", EXAMPLE.toString(), "--input", events.toString(),
                    "--from", "2026-01-05", "--to", "2026-02-02", "--out", dir.resolve("baselines").toString());
            System.err.flush();
            assertEquals("", err.toString(StandardCharsets.UTF_8), "nothing on standard error");
            assertEquals("", out.toString(StandardCharsets.UTF_8), "nothing on standard output but the command's");
            piped = CommandLineTest.run("simulate", "--out", "-", "--duration", "8w");
        } finally {
            System.setOut(stdout);
            System.setErr(stderr);
        }
        for (CommandLineTest.Result r : List.of(simulate, replay, hidden, baseline, piped)) {
            assertEquals(0, r.status(), r.err());
            assertEquals("", r.err(), "no progress text on the command's error stream");
        }
        assertEquals("", err.toString(StandardCharsets.UTF_8));
        assertEquals(Files.readString(events), out.toString(StandardCharsets.UTF_8), "--out - is the records only");
        assertEquals(replay.out().replace(dir.resolve("a").toString(), "DIR"),
                hidden.out().replace(dir.resolve("b").toString(), "DIR"));
        for (String f : List.of("estimates.jsonl", "estimates.csv", "alerts.jsonl", "rejects.jsonl", "summary.json")) {
            assertEquals(Files.readString(dir.resolve("a").resolve(f)), Files.readString(dir.resolve("b").resolve(f)), f);
        }
        assertTrue(baseline.out().contains("respiratory"), baseline.out());
    }
}
