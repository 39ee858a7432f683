package org.oddswatch.ingest.check;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.GapScenario;
import org.oddswatch.ingest.pipeline.HouseEvents;
import org.oddswatch.ingest.pipeline.Outcome;

class DefinitionCheckerTest {

    @TempDir
    Path dir;

    private static Path definition() throws Exception {
        return Path.of(DefinitionCheckerTest.class.getResource("/definitions/respiratory.yaml").toURI());
    }

    @Test
    void sampleEventsAreCountedByReason() throws Exception {
        List<String> lines = new ArrayList<>(HouseEvents.generate(5, 200, Instant.parse("2026-03-02T00:00:00Z"),
                14 * 86_400_000L, 0, "north", "south"));
        lines.add("{\"id\": 1");
        lines.add(lines.get(199));
        lines.add(lines.get(198).replace("\"female\"", "\"unknown\"").replace("\"male\"", "\"unknown\""));
        lines.add(lines.get(197).replace("\"collectedAt\":\"", "\"collectedAt\":\"x"));
        Path events = dir.resolve("sample.jsonl");
        Files.write(events, lines, StandardCharsets.UTF_8);
        CheckReport report = DefinitionChecker.check(DefinitionLoader.load(definition()), events, null);
        CheckReport check = report;
        assertEquals(204, check.records().consumed());
        assertEquals(200, check.records().outcome(Outcome.ACCEPTED));
        assertEquals(1, check.records().outcome(Outcome.DUPLICATE));
        assertEquals(1, check.records().reasons().get(RejectReason.MALFORMED_JSON));
        assertEquals(1, check.records().reasons().get(RejectReason.UNKNOWN_LEVEL));
        assertEquals(1, check.records().reasons().get(RejectReason.BAD_TIME));
        assertEquals(201, check.examples().get(RejectReason.MALFORMED_JSON).line());
        assertEquals(203, check.examples().get(RejectReason.UNKNOWN_LEVEL).line());
        CheckReport.MonitorCounts monitor = check.monitors().get(0);
        assertEquals(2, monitor.streams());
        assertEquals(204, monitor.counts().consumed());
        String text = report.describe();
        assertTrue(text.contains("204 record(s): 200 accepted, 3 rejected, 0 late, 1 duplicate"), text);
        assertTrue(text.contains("unknown-level: 1 (first at line 203: sex: 'unknown' is not a declared level of sex)"),
                text);
    }

    @Test
    void theRulesListEndsWithTheFalseAlarmBudgetSplitOverTheStreams() throws Exception {
        StringBuilder rules = new StringBuilder();
        CheckReport.appendRules(rules, DefinitionLoader.load(definition()).monitors().get(0));
        // The split monitor allows 8 streams: a budget of 1 a year is 1/8 per stream.
        assertTrue(rules.toString().contains("      false-alarm budget: 1.000 a year for the monitor, 0.125 per stream over 8"
                + " streams (confidence 0.99 against the baseline's error); cusum.limit and oddsRatioCusum.limit and"
                + " calibration bands derived per stream from its baseline\n"), rules.toString());
    }

    @Test
    void anInvalidDefinitionIsReportedWithItsLine() throws Exception {
        Path bad = dir.resolve("bad.yaml");
        Files.writeString(bad, Files.readString(definition()).replace("step: P7D", "step: P5D"));
        DefinitionException e = assertThrows(DefinitionException.class, () -> DefinitionLoader.load(bad));
        assertEquals(24, e.line());
        assertEquals("monitors[0].window.width", e.key());
    }

    /**
     * {@code check} lists each monitor's rules, on or off with the reason, and the notices of rules
     * running because they are not listed; with sample events it lists what they would leave
     * unmonitored: here a CSV without the column of the term smoker.
     */
    @Test
    void rulesAndWhatTheSampleWouldLeaveUnmonitoredAreListed() throws Exception {
        Path definition = dir.resolve("gaps.yaml");
        Files.writeString(definition, GapScenario.definition("clinic-tests"));
        Path events = dir.resolve("sample.csv");
        Files.write(events, GapScenario.csvLines(), StandardCharsets.UTF_8);
        MonitorConfig config = DefinitionLoader.load(definition);
        CheckReport report = DefinitionChecker.check(config, events, null);
        StringBuilder rules = new StringBuilder();
        CheckReport.appendRules(rules, config.monitors().get(0));
        assertEquals(String.join("\n", "    rules:", "      odds-ratio-drift: on (needs a baseline)",
                "      odds-ratio-bounds: on", "      calibration: on (needs a baseline)",
                "      bernoulli-cusum: off [switched-off]: switched off in the definition (rules.cusum.enabled: false)",
                "      odds-ratio-cusum: on (needs a baseline)",
                "      false-alarm budget: 1.000 a year for the monitor, 1.000 per stream over 1 stream (confidence 0.99 against the"
                        + " baseline's error); oddsRatioCusum.limit and calibration bands derived per stream from its baseline",
                ""), rules.substring(0, rules.indexOf("    note: ")));
        assertEquals(1, config.monitors().get(0).notices().size(), "calibration is not listed: " + rules);
        assertTrue(rules.toString().contains("    note: monitors[0].rules.calibration is not listed, so it runs with its "
                + "defaults"), rules.toString());
        assertEquals(GapScenario.EXPECTED, GapScenario.keys(report.gaps()));

        String text = report.describe();
        assertTrue(text.contains("not monitored (7):\n  clinic: no baseline in use [baseline-failed]: cannot fit a "
                + "baseline model"), text);
        assertTrue(text.contains("  clinic: term smoker missing from every event [term-missing]"), text);
        assertTrue(text.contains("  clinic: rule bernoulli-cusum not running [switched-off]"), text);
    }
}
