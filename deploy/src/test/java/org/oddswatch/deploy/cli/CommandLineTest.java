package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.oddswatch.deploy.scenario.RecordDefect;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioEvent;
import org.oddswatch.deploy.scenario.ScenarioOptions;
import org.oddswatch.ingest.pipeline.GapScenario;

/** The command line in-process: help, exit statuses 0 / 2 / 1, and one-line errors. */
class CommandLineTest {

    private static final Path EXAMPLE = Path.of("examples/respiratory.yaml");

    @TempDir
    Path dir;

    record Result(int status, String out, String err) {
        List<String> errLines() {
            return err.lines().toList();
        }
    }

    static Result run(String... args) {
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        int status = OddswatchCommand.execute(args, new PrintWriter(out, true), new PrintWriter(err, true));
        return new Result(status, out.toString(), err.toString());
    }

    @ParameterizedTest
    @ValueSource(strings = {"sandbox", "run", "replay", "baseline", "check", "simulate", "audit", "tune"})
    void everyCommandHasHelp(String command) {
        Result r = run(command, "--help");
        assertEquals(0, r.status(), r.err());
        assertTrue(r.out().startsWith("Usage: oddswatch " + command), r.out());
        assertTrue(r.err().isEmpty(), r.err());
    }

    @Test
    void topLevelHelpListsTheCommands() {
        Result r = run("--help");
        assertEquals(0, r.status());
        for (String c : List.of("sandbox", "run", "replay", "baseline", "check", "simulate", "audit", "tune")) {
            assertTrue(r.out().contains("  " + c + " "), c + " in " + r.out());
        }
    }

    @Test
    void usageErrorsExitTwoWithOneLine() {
        Result unknown = run("check", "--config", EXAMPLE.toString(), "--no-such-option");
        assertEquals(2, unknown.status());
        assertEquals(1, unknown.errLines().size(), unknown.err());
        assertTrue(unknown.err().contains("--no-such-option"), unknown.err());

        Result missing = run("replay", "--input", "x.jsonl", "--out", dir.toString());
        assertEquals(2, missing.status());
        assertEquals(1, missing.errLines().size(), missing.err());
        assertTrue(missing.err().contains("--config"), missing.err());

        Result badDuration = run("simulate", "--out", dir.resolve("x.jsonl").toString(), "--duration", "soon");
        assertEquals(2, badDuration.status());
        assertEquals(List.of("oddswatch simulate: Invalid value for option '--duration': 'soon' is not a duration "
                + "(examples: P28D, PT90S, 90s, 40w) (see 'oddswatch simulate --help')"), badDuration.errLines());

        Result badScenario = run("simulate", "--out", dir.resolve("x.jsonl").toString(), "--scenario", "calm");
        assertEquals(2, badScenario.status());
        assertEquals(1, badScenario.errLines().size(), badScenario.err());
        assertTrue(badScenario.err().contains("unknown scenario 'calm'"), badScenario.err());
    }

    @Test
    void aBadDefinitionExitsTwoNamingFileLineAndKey() throws IOException {
        String text = Files.readString(EXAMPLE, StandardCharsets.UTF_8).replaceFirst("step: P7D", "step: P5D");
        Path bad = dir.resolve("bad.yaml");
        Files.writeString(bad, text, StandardCharsets.UTF_8);
        int line = lineOf(text, "width: P28D");
        for (String command : List.of("check", "run", "sandbox")) {
            Result r = run(command, "--config", bad.toString());
            assertEquals(2, r.status(), command + ": " + r.err());
            assertEquals(1, r.errLines().size(), command + ": " + r.err());
            assertTrue(Pattern.compile("^oddswatch " + command + ": " + Pattern.quote(bad.toString()) + ":" + line
                    + ": monitors\\[0\\]\\.window\\.width: .*P28D.*P5D.*").matcher(r.err().trim()).matches(),
                    command + ": " + r.err());
        }
    }

    @Test
    void anUnknownKeyIsNamedWithItsLine() throws IOException {
        String text = Files.readString(EXAMPLE, StandardCharsets.UTF_8).replaceFirst("    estimates:\n",
                "    estimates:\n      colour: blue\n");
        Path bad = dir.resolve("unknown.yaml");
        Files.writeString(bad, text, StandardCharsets.UTF_8);
        Result r = run("check", "--config", bad.toString());
        assertEquals(2, r.status(), r.err());
        assertEquals(1, r.errLines().size(), r.err());
        assertTrue(r.err().startsWith("oddswatch check: " + bad + ":" + lineOf(text, "colour: blue")
                + ": monitors[0].estimates.colour"), r.err());
    }

    @Test
    void missingFilesAreConfigurationErrors() {
        Result noDefinition = run("check", "--config", dir.resolve("absent.yaml").toString());
        assertEquals(2, noDefinition.status());
        assertEquals(1, noDefinition.errLines().size(), noDefinition.err());

        Result noInput = run("replay", "--config", EXAMPLE.toString(), "--input", dir.resolve("absent.jsonl").toString(),
                "--out", dir.resolve("out").toString());
        assertEquals(2, noInput.status());
        assertTrue(noInput.err().contains("absent.jsonl"), noInput.err());

        Result badPeriod = run("baseline", "--config", EXAMPLE.toString(), "--input", "x", "--from", "2026-03-30",
                "--to", "2026-01-05", "--out", dir.toString());
        assertEquals(2, badPeriod.status());
        assertEquals(List.of("oddswatch baseline: --from must lie before --to"), badPeriod.errLines());
    }

    @Test
    void aRuntimeFailureExitsOneWithOneLineAndVerboseAddsTheTrace() throws IOException {
        Path events = dir.resolve("events.jsonl");
        assertEquals(0, run("simulate", "--out", events.toString(), "--duration", "3w").status());
        Path blocked = dir.resolve("not-a-folder");
        Files.writeString(blocked, "a file where the report folder should go");
        Result r = run("replay", "--config", EXAMPLE.toString(), "--input", events.toString(), "--out",
                blocked.toString());
        assertEquals(1, r.status(), r.err());
        assertEquals(1, r.errLines().size(), r.err());
        assertTrue(r.err().contains("--verbose"), r.err());

        Result verbose = run("replay", "--verbose", "--config", EXAMPLE.toString(), "--input", events.toString(),
                "--out", blocked.toString());
        assertEquals(1, verbose.status());
        assertTrue(verbose.errLines().size() > 3 && verbose.err().contains("\tat "), verbose.err());
    }

    @Test
    void simulateWritesTheScenarioRecordsWithTheGivenOptions() throws IOException {
        Path file = dir.resolve("feed.jsonl");
        Result r = run("simulate", "--scenario", "steady", "--seed", "11", "--rate", "500", "--duration", "P14D",
                "--start", "2026-02-02", "--out", file.toString());
        assertEquals(0, r.status(), r.err());
        List<String> expected = Scenario.steady(ScenarioOptions.defaults().withSeed(11).withEventsPerWeek(500)
                        .withStart(java.time.Instant.parse("2026-02-02T00:00:00Z")).withDuration(Duration.ofDays(14)))
                .events().map(ScenarioEvent::toJson).toList();
        assertEquals(expected, Files.readAllLines(file, StandardCharsets.UTF_8));
        assertTrue(r.out().contains("wrote " + expected.size() + " records"), r.out());
    }

    @Test
    void checkCountsSampleEventsByOutcomeAsTheGeneratorInjectedThem() throws IOException {
        // Each injected defect must land in its outcome: the generator's labels against the pipeline's counts.
        ScenarioOptions options = ScenarioOptions.defaults().withDuration(Duration.ofDays(7 * 8)).withDefectShare(0.03);
        List<ScenarioEvent> events = Scenario.respiratory(options).events().toList();
        Path file = dir.resolve("sample.jsonl");
        Files.write(file, events.stream().map(ScenarioEvent::toJson).toList(), StandardCharsets.UTF_8);
        Result r = run("check", "--config", EXAMPLE.toString(), "--events", file.toString());
        assertEquals(0, r.status(), r.err());
        long rejected = events.stream().filter(e -> e.defect().rejected()).count();
        long late = events.stream().filter(e -> e.defect() == RecordDefect.LATE).count();
        long duplicate = events.stream().filter(e -> e.defect() == RecordDefect.DUPLICATE).count();
        long accepted = events.size() - rejected - late - duplicate;
        String expected = file + ": " + events.size() + " record(s): " + accepted + " accepted, " + rejected
                + " rejected, " + late + " late, " + duplicate + " duplicate";
        assertTrue(r.out().contains(expected), "expected '" + expected + "' in\n" + r.out());
        assertFalse(r.out().contains("unknown-level"), r.out());
    }

    @Test
    void replayWritesTheReportFolderAndIsRepeatable() throws IOException {
        Path events = dir.resolve("events.jsonl");
        assertEquals(0, run("simulate", "--out", events.toString(), "--duration", "20w").status());
        Result first = run("replay", "--config", EXAMPLE.toString(), "--input", events.toString(), "--out",
                dir.resolve("a").toString());
        Result second = run("replay", "--config", EXAMPLE.toString(), "--input", events.toString(), "--out",
                dir.resolve("b").toString());
        assertEquals(0, first.status(), first.err());
        assertEquals(0, second.status(), second.err());
        for (String f : List.of("estimates.jsonl", "alerts.jsonl", "rejects.jsonl", "summary.json")) {
            assertTrue(Files.size(dir.resolve("a").resolve(f)) >= 0);
            assertEquals(Files.readString(dir.resolve("a").resolve(f)), Files.readString(dir.resolve("b").resolve(f)), f);
        }
        // 20 weeks take in the week-16 doubling of the household-contact odds ratio
        assertTrue(Files.readString(dir.resolve("a").resolve("alerts.jsonl"))
                .contains("\"rule\":\"odds-ratio-drift\""), "drift alert in the replay");
    }

    /**
     * A CSV without the column of one term, through {@code check --events} and {@code replay}: both
     * print the rules (check) and what is not monitored, with reason codes and reasons in words.
     */
    @Test
    void checkAndReplayPrintWhatIsNotMonitored() throws IOException {
        Path definition = dir.resolve("gaps.yaml");
        Files.writeString(definition, GapScenario.definition("clinic-tests"));
        Path events = dir.resolve("gaps.csv");
        Files.write(events, GapScenario.csvLines(), StandardCharsets.UTF_8);

        Result check = run("check", "--config", definition.toString(), "--events", events.toString());
        assertEquals(0, check.status(), check.err());
        assertTrue(check.out().contains("    rules:\n      odds-ratio-drift: on (needs a baseline)\n"
                + "      odds-ratio-bounds: on\n      calibration: on (needs a baseline)\n"
                + "      bernoulli-cusum: off [switched-off]: switched off in the definition (rules.cusum.enabled: false)\n"
                + "      odds-ratio-cusum: on (needs a baseline)\n"
                + "      false-alarm budget: 1.000 a year for the monitor, 1.000 per stream over 1 stream (confidence 0.99"
                + " against the baseline's error); oddsRatioCusum.limit and calibration bands derived per stream from its"
                + " baseline\n    note: monitors[0].rules.calibration is not listed, so it runs with its defaults"),
                check.out());
        Result replay = run("replay", "--config", definition.toString(), "--input", events.toString(), "--out",
                dir.resolve("out").toString());
        assertEquals(0, replay.status(), replay.err());
        assertTrue(replay.err().contains("note: " + definition + ": monitor clinic: monitors[0].rules.calibration is "
                + "not listed, so it runs with its defaults"), replay.err());
        for (Result r : List.of(check, replay)) {
            assertTrue(r.out().contains("not monitored (7"), r.out());
            for (String line : List.of(
                    "  clinic: no baseline in use [baseline-failed]: cannot fit a baseline model on 2026-01-05T00:00:00Z",
                    "  clinic: rule odds-ratio-drift not running [baseline-failed]: cannot fit a baseline model",
                    "  clinic: rule bernoulli-cusum not running [switched-off]: switched off in the definition",
                    "final window(s) not judged by odds-ratio-bounds [no-fit]",
                    "  clinic: 7 final window(s) not judged by any rule [baseline-period]",
                    "  clinic: term smoker missing from every event [term-missing]: none of the 1200 accepted event(s)")) {
                assertTrue(r.out().contains(line), line + " in\n" + r.out());
            }
        }
    }

    /**
     * {@code baseline} prints what it froze per stream, refuses a model from too little information
     * (exit 1, the reason printed, no file), and writes it flagged with {@code --allow-weak}.
     */
    @Test
    void baselinePrintsWhatItFrozeAndRefusesAWeakModel() throws IOException {
        Path definition = dir.resolve("gaps.yaml");
        // the scenario with the smoker term removed: a model that can be fitted
        Files.writeString(definition, GapScenario.definition("clinic-tests")
                .replace("      - {name: smoker, field: /smoker, kind: binary}\n", ""));
        Path events = dir.resolve("events.csv");
        Files.write(events, GapScenario.csvLines(), StandardCharsets.UTF_8);
        Result ok = run("baseline", "--config", definition.toString(), "--input", events.toString(), "--from",
                "2026-01-05T00:00:00Z", "--to", "2026-02-02T00:00:00Z", "--out", dir.resolve("b").toString());
        assertEquals(0, ok.status(), ok.err());
        // 1200 events evenly over ten weeks: four weeks hold 480
        assertTrue(Pattern.compile("^clinic: frozen, 480 events, \\d+ positives from 2026-01-05T00:00:00Z to "
                + "2026-02-02T00:00:00Z -> .*clinic\\.json\n  household_contact=yes: odds ratio [0-9.]+ \\(log-odds SE "
                + "[0-9.]+\\)\n$").matcher(ok.out()).find(), ok.out());

        Result refused = run("baseline", "--config", definition.toString(), "--input", events.toString(), "--from",
                "2026-01-05T00:00:00Z", "--to", "2026-01-08T00:00:00Z", "--out", dir.resolve("c").toString());
        assertEquals(1, refused.status(), refused.out());
        // three days: about 51 events, too few positives for one coefficient besides the intercept
        assertTrue(Pattern.compile("^clinic: refused-weak, 5\\d events, \\d+ positives from 2026-01-05T00:00:00Z to "
                + "2026-01-08T00:00:00Z, no file written\n  why: refused: too little information: 5\\d events, of which "
                + "\\d positive, for 1 coefficient\\(s\\) besides the intercept; at least 10 of the rarer outcome")
                .matcher(refused.out()).find(), refused.out());
        assertTrue(refused.err().contains("1 of 1 baseline(s) not written"), refused.err());
        assertFalse(Files.exists(dir.resolve("c").resolve("clinic.json")));

        Result weak = run("baseline", "--config", definition.toString(), "--input", events.toString(), "--from",
                "2026-01-05T00:00:00Z", "--to", "2026-01-08T00:00:00Z", "--out", dir.resolve("c").toString(),
                "--allow-weak");
        assertEquals(0, weak.status(), weak.err());
        assertTrue(weak.out().startsWith("clinic: frozen-weak, 5"), weak.out());
        assertTrue(weak.out().contains("\n  weak: too little information"), weak.out());
        assertTrue(Files.exists(dir.resolve("c").resolve("clinic.json")));
    }

    private static int lineOf(String text, String needle) {
        List<String> lines = text.lines().toList();
        for (int i = 0; i < lines.size(); i++) {
            if (lines.get(i).contains(needle)) {
                return i + 1;
            }
        }
        throw new AssertionError(needle + " not found");
    }
}
