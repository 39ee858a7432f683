package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * {@code oddswatch tune} against full replays: for other limits, the alerts the command re-runs from a
 * replay's rule inputs are, byte for byte, the {@code alerts.jsonl} of a replay of the same events
 * with a definition carrying those limits.
 */
class TuneCommandTest {

    private static final Path EXAMPLE = Path.of("examples/respiratory.yaml");
    private static final String AFTER = "2026-05-04T00:00:00Z";

    @TempDir
    static Path dir;

    static Path events;
    static Path replay;
    static String example;

    @BeforeAll
    static void replayTheRespiratoryScenario() throws IOException {
        // the scenario's shifts start after week 16: 30 weeks at 600 tests a week give alerts of every rule
        events = dir.resolve("events.jsonl");
        assertEquals(0, CommandLineTest.run("simulate", "--rate", "600", "--duration", "30w", "--out",
                events.toString()).status());
        example = Files.readString(EXAMPLE, StandardCharsets.UTF_8);
        replay = replay(EXAMPLE, "replay");
    }

    private static Path replay(Path definition, String name) {
        Path out = dir.resolve(name);
        CommandLineTest.Result r = CommandLineTest.run("replay", "--for-tuning", "--config", definition.toString(), "--input",
                events.toString(), "--out", out.toString());
        assertEquals(0, r.status(), r.err());
        return out;
    }

    /** The example definition with {@code from} replaced by {@code to} (in every monitor's rules). */
    private static Path edited(String name, String from, String to) throws IOException {
        assertTrue(example.contains(from), from);
        Path file = dir.resolve(name + ".yaml");
        Files.writeString(file, example.replace(from, to), StandardCharsets.UTF_8);
        return file;
    }

    private static String alerts(Path folder) throws IOException {
        return Files.readString(folder.resolve("alerts.jsonl"), StandardCharsets.UTF_8);
    }

    @Test
    void threeOtherSettingsGiveTheAlertsOfFullReplaysWithThem() throws IOException {
        List<Path> settings = List.of(
                edited("lower-drift", "limit: 3.0 ", "limit: 2.2 "),
                edited("higher-cusum", "limit: 8.0", "limit: 14.0"),
                edited("calibration", "observedExpected: {min: 0.8, max: 1.25}", "observedExpected: {min: 0.9, max: 1.1}"));
        Path out = dir.resolve("tuned");
        CommandLineTest.Result r = CommandLineTest.run("tune", "--replay", replay.toString(),
                "--rules-from", settings.get(0).toString(), "--rules-from", settings.get(1).toString(),
                "--rules-from", settings.get(2).toString(), "--after", AFTER, "--out", out.toString());
        assertEquals(0, r.status(), r.err());
        assertTrue(r.out().contains("not a diagnosis or proof of cause"), r.out());
        String base = alerts(replay);
        assertTrue(!base.isEmpty(), "the scenario gives alerts with the example's limits");
        List<String> lines = Files.readAllLines(out.resolve(TuneCommand.SETTINGS), StandardCharsets.UTF_8);
        assertEquals(3, lines.size());
        for (int i = 0; i < settings.size(); i++) {
            String full = alerts(replay(settings.get(i), "full-" + i));
            String tuned = alerts(out.resolve("setting-" + (i + 1)));
            assertEquals(full, tuned, settings.get(i).toString());
            assertNotEquals(base.replace(EXAMPLE.toString(), settings.get(i).toString()), full,
                    "the setting changes the alerts: " + settings.get(i));
            JsonNode summary = Json.mapper().readTree(lines.get(i));
            assertEquals(full.lines().count(), summary.get("messages").asLong());
            assertEquals(full.lines().map(l -> l.substring(0, l.indexOf(','))).distinct().count(),
                    summary.get("episodes").asLong());
            String firstRaised = null;
            for (String l : full.lines().toList()) {
                JsonNode alert = Json.mapper().readTree(l);
                String end = alert.get("windowEnd").asText();
                if ("raised".equals(alert.get("state").asText()) && end.compareTo(AFTER) >= 0
                        && (firstRaised == null || end.compareTo(firstRaised) < 0)) {
                    firstRaised = end;
                }
            }
            assertTrue(firstRaised != null, "an episode raised after " + AFTER);
            assertEquals(firstRaised, summary.get("firstRaised").get("windowEnd").asText());
        }
    }

    @Test
    void aGridPointGivesTheAlertsOfAFullReplayWithItsWrittenDefinition() throws IOException {
        Path out = dir.resolve("grid");
        CommandLineTest.Result r = CommandLineTest.run("tune", "--replay", replay.toString(), "--config",
                EXAMPLE.toString(), "--try", "cusum.limit=6,14", "--out", out.toString());
        assertEquals(0, r.status(), r.err());
        assertEquals(2, Files.readAllLines(out.resolve(TuneCommand.SETTINGS)).size());
        for (String setting : List.of("setting-1", "setting-2")) {
            Path definition = out.resolve(setting).resolve("definition.yaml");
            assertEquals(alerts(replay(definition, "grid-full-" + setting)), alerts(out.resolve(setting)), setting);
        }
        assertNotEquals(alerts(out.resolve("setting-1")), alerts(out.resolve("setting-2")));
    }

    @Test
    void aDefinitionDifferingBeyondItsRulesIsRefused() throws IOException {
        Path otherWindow = edited("other-window", "width: P28D", "width: P21D");
        CommandLineTest.Result r = CommandLineTest.run("tune", "--replay", replay.toString(), "--rules-from",
                otherWindow.toString(), "--out", dir.resolve("refused").toString());
        assertEquals(2, r.status());
        assertTrue(r.err().contains("only the rules sections may differ"), r.err());
    }

    @Test
    void aMalformedTryIsAConfigurationError() {
        CommandLineTest.Result r = CommandLineTest.run("tune", "--replay", replay.toString(), "--config",
                EXAMPLE.toString(), "--try", "cusum.limit", "--out", dir.resolve("bad").toString());
        assertEquals(2, r.status());
        assertTrue(r.err().contains("RULE.KEY=VALUE"), r.err());
    }

    @Test
    void aReplayMadeWithoutForTuningHasNoRuleInputsAndTuneSaysHowToMakeThem() {
        Path plain = dir.resolve("plain-replay");
        CommandLineTest.Result made = CommandLineTest.run("replay", "--config", EXAMPLE.toString(), "--input",
                events.toString(), "--out", plain.toString());
        assertEquals(0, made.status(), made.err());
        assertTrue(!Files.exists(plain.resolve(ReplayRunner.RULE_INPUTS)), "rules-input.jsonl only with --for-tuning");
        CommandLineTest.Result r = CommandLineTest.run("tune", "--replay", plain.toString(), "--rules-from",
                EXAMPLE.toString(), "--out", dir.resolve("no-inputs").toString());
        assertEquals(2, r.status());
        assertTrue(r.err().contains("--for-tuning"), r.err());
    }
}
