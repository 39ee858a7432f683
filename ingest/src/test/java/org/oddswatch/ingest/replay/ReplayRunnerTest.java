package org.oddswatch.ingest.replay;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.net.URISyntaxException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.report.ReplayReport;
import org.oddswatch.estimator.EstimatorOptions;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.UndeclaredLevelPolicy;
import org.oddswatch.estimator.window.WindowGeometry;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.pipeline.GapScenario;
import org.oddswatch.ingest.pipeline.HouseEvents;
import org.oddswatch.ingest.pipeline.HouseEvents.HouseEvent;
import org.oddswatch.ingest.pipeline.Outcome;

class ReplayRunnerTest {

    static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    static final Instant BASELINE_END = Instant.parse("2026-02-02T00:00:00Z");
    static final long WEEK = Duration.ofDays(7).toMillis();
    static final List<String> BANDS = List.of("0-17", "18-39", "40-64", "65+");

    @TempDir
    Path dir;

    static Path definition() throws URISyntaxException {
        return Path.of(ReplayRunnerTest.class.getResource("/replay/replay.yaml").toURI());
    }

    /** Ten weeks of in-order events in two regions. */
    static List<HouseEvent> tenWeeks() {
        return HouseEvents.events(20260105, 6000, START, 10 * WEEK, 0, "north", "south");
    }

    private Path jsonl(String name, List<String> lines) throws IOException {
        Path file = dir.resolve(name);
        Files.write(file, lines, StandardCharsets.UTF_8);
        return file;
    }

    private static List<String> json(List<HouseEvent> events) {
        List<String> lines = new ArrayList<>();
        for (HouseEvent event : events) {
            lines.add(event.json());
        }
        return lines;
    }

    private ReplaySummary replay(Path input, String out) throws Exception {
        return ReplayRunner.run(ReplayRequest.of(definition(), input, dir.resolve(out)));
    }

    private List<String> lines(String out, String file) throws IOException {
        return Files.readAllLines(dir.resolve(out).resolve(file), StandardCharsets.UTF_8);
    }

    @Test
    void sameInputGivesByteIdenticalOutput() throws Exception {
        List<String> lines = json(tenWeeks());
        lines.add(100, "{broken");
        Path input = jsonl("events.jsonl", lines);
        replay(input, "one");
        replay(input, "two");
        for (String file : List.of(ReplayRunner.ESTIMATES, ReplayRunner.REJECTS, ReplayRunner.ALERTS,
                ReplayRunner.SUMMARY)) {
            assertArrayEquals(Files.readAllBytes(dir.resolve("one").resolve(file)),
                    Files.readAllBytes(dir.resolve("two").resolve(file)), file);
        }
        assertFalse(lines("one", ReplayRunner.ESTIMATES).isEmpty());
        assertTrue(Files.exists(dir.resolve("one").resolve("report.md")));
    }

    /**
     * The independent path: the same events coded straight from their values (no JSON, no decoder,
     * no pipeline), bucketed by WindowGeometry and estimated with WindowEstimator, warm-started from
     * the previous final window, with the baseline fitted on [from, to) directly.
     */
    @Test
    void estimatesEqualADirectComputation() throws Exception {
        List<HouseEvent> events = tenWeeks();
        replay(jsonl("events.jsonl", json(events)), "out");
        List<String> written = lines("out", ReplayRunner.ESTIMATES);

        DesignCoder coder = new DesignCoder(List.of(
                new BinaryTerm("household_contact", "yes", "no", UndeclaredLevelPolicy.REJECT, true),
                new BinaryTerm("recent_travel", "yes", "no", UndeclaredLevelPolicy.REJECT, true),
                new CategoricalTerm("age_band", BANDS, "18-39", UndeclaredLevelPolicy.MISSING, null, false),
                new CategoricalTerm("sex", List.of("female", "male"), "female", UndeclaredLevelPolicy.REJECT, null,
                        false)));
        WindowEstimator estimator = new WindowEstimator(coder, EstimatorOptions.defaults().withStratifyBy("age_band"));
        WindowGeometry geometry = new WindowGeometry(4 * WEEK, WEEK, START.toEpochMilli(), Duration.ofDays(1).toMillis());
        List<String> expected = new ArrayList<>();
        for (String region : List.of("north", "south")) {
            WindowStore store = new WindowStore(coder, 4096, 4);
            WindowStore baselineStore = new WindowStore(coder, 4096, 4);
            long first = Long.MAX_VALUE;
            long last = Long.MIN_VALUE;
            for (HouseEvent e : events) {
                if (!e.region().equals(region)) {
                    continue;
                }
                double[] row = new double[coder.width()];
                boolean complete = coder.code(new Object[] {e.household() ? "yes" : "no", e.travel(), e.band(),
                        e.sex()}, row).isOk();
                int stratum = e.band() == null ? -1 : BANDS.indexOf(e.band());
                long bucket = geometry.bucketOf(e.time().toEpochMilli());
                store.add(bucket, complete ? row : null, e.positive(), stratum);
                if (e.time().isBefore(BASELINE_END)) {
                    baselineStore.add(0, complete ? row : null, e.positive(), stratum);
                }
                first = Math.min(first, bucket);
                last = Math.max(last, bucket);
            }
            BaselineModel baseline = estimator.fitBaseline(baselineStore.window(0, 1), START.toString(),
                    BASELINE_END.toString(), definitionChecksum());
            long baselineFrom = geometry.bucketOf(BASELINE_END.toEpochMilli() - 1) + 1;
            double[] warm = null;
            for (long end = first + 1; end <= last + 4; end++) {
                WindowEstimate estimate = estimator.estimate("respiratory/" + region, geometry.windowStart(end),
                        geometry.windowEnd(end), WindowStatus.FINAL, store.window(end - 4, end), warm,
                        end >= baselineFrom ? baseline : null);
                warm = estimator.coefficientVector(estimate);
                for (int j = 0; warm != null && j < warm.length; j++) {
                    warm[j] = (float) warm[j]; // the documented warm start: rounded to single precision
                }
                expected.add(Json.write(estimate));
            }
        }
        assertEquals(13 * 2, expected.size());
        // the replay adds what the alert rules computed per window (drift z, CUSUM values); the
        // estimator's own figures must equal the direct computation
        List<String> estimatorsOwn = new ArrayList<>();
        int withDrift = 0;
        for (String line : written) {
            WindowEstimate e = Json.mapper().readValue(line, WindowEstimate.class);
            withDrift += e.drift() == null ? 0 : 1;
            estimatorsOwn.add(Json.write(e.withCharts(null, null)));
        }
        assertTrue(withDrift > 0, "the drift z of windows after the baseline period");
        written = estimatorsOwn;
        List<String> sorted = new ArrayList<>(written);
        sorted.sort(java.util.Comparator.comparing(s -> s.contains("respiratory/north") ? 0 : 1));
        assertEquals(expected, sorted);
        JsonNode firstWithBaseline = Json.mapper().readTree(written.stream()
                .filter(s -> s.contains("\"windowEnd\":\"2026-02-09T00:00:00Z\"")).findFirst().orElseThrow());
        assertTrue(firstWithBaseline.get("calibration").isObject(), "calibration after the baseline period");
    }

    private static String definitionChecksum() throws Exception {
        return org.oddswatch.ingest.definition.DefinitionLoader.load(definition()).monitors().get(0).checksum();
    }

    /**
     * Arrival order within the allowed lateness does not matter: events shuffled by up to half the
     * lateness give byte-identical estimates and alerts to the same events in time order.
     */
    @Test
    void arrivalOrderWithinTheLatenessDoesNotChangeTheOutput() throws Exception {
        List<HouseEvent> jittered = HouseEvents.events(99, 12000, START, 10 * WEEK, Duration.ofHours(12).toMillis(),
                START.plusMillis(6 * WEEK), 1.2, "north", "south");
        List<HouseEvent> sorted = new ArrayList<>(jittered);
        sorted.sort(java.util.Comparator.comparing(HouseEvent::time).thenComparing(HouseEvent::id));
        assertFalse(sorted.equals(jittered), "the jitter reorders events");
        // Same file name in two folders: alert texts quote the input in their replay command.
        Files.createDirectories(dir.resolve("a"));
        Files.createDirectories(dir.resolve("b"));
        ReplaySummary shuffled = replay(jsonl("a/events.jsonl", json(jittered)), "jittered");
        replay(jsonl("b/events.jsonl", json(sorted)), "sorted");
        assertEquals(0, shuffled.records().outcome(Outcome.LATE));
        // Streams close their windows at different moments under different orders, so the files are
        // compared stream by stream (each stream's lines in their order).
        for (String file : List.of(ReplayRunner.ESTIMATES, ReplayRunner.ALERTS)) {
            assertEquals(byStream(lines("sorted", file)), byStream(lines("jittered", file).stream()
                    .map(line -> line.replace(dir.resolve("a").toString(), dir.resolve("b").toString())).toList()), file);
        }
        assertEquals(26, lines("sorted", ReplayRunner.ESTIMATES).size());
        assertFalse(lines("sorted", ReplayRunner.ALERTS).isEmpty(), "the drift after week 6 raises alerts");
    }

    private static List<String> byStream(List<String> lines) {
        List<String> grouped = new ArrayList<>(lines);
        grouped.sort(java.util.Comparator.comparing(line -> line.substring(line.indexOf("\"stream\":"),
                line.indexOf('"', line.indexOf("\"stream\":") + 10))));
        return grouped;
    }

    /**
     * What a restart relies on: a stream that starts mid-way (as after re-reading from an offset)
     * gives bit-identical estimates from the second window whose data are complete on, because the
     * warm start is rounded (StreamState.reproducibleStart) and so no longer carries the history.
     */
    @Test
    void aStreamStartedMidWayAgreesFromItsSecondCompleteWindow() throws Exception {
        Path definition = dir.resolve("no-baseline.yaml");
        Files.writeString(definition, Files.readString(definition()).replaceAll("(?m)^    baseline: .*$\n", ""));
        List<HouseEvent> events = HouseEvents.events(5, 30000, START, 20 * WEEK, 0, "north");
        Instant cut = START.plus(Duration.ofDays(7 * 9 + 3));
        List<String> later = new ArrayList<>();
        for (HouseEvent event : events) {
            if (!event.time().isBefore(cut)) {
                later.add(event.json());
            }
        }
        ReplayRunner.run(ReplayRequest.of(definition, jsonl("all.jsonl", json(events)), dir.resolve("all")));
        ReplayRunner.run(ReplayRequest.of(definition, jsonl("later.jsonl", later), dir.resolve("later")));
        List<String> full = lines("all", ReplayRunner.ESTIMATES);
        List<String> part = lines("later", ReplayRunner.ESTIMATES);
        // The cut lies in the week ending 2026-03-16; the first complete window ends 2026-04-13.
        Instant secondComplete = Instant.parse("2026-04-20T00:00:00Z");
        int compared = 0;
        for (String line : part) {
            Instant end = Instant.parse(Json.mapper().readTree(line).get("windowEnd").asText());
            if (!end.isBefore(secondComplete)) {
                assertTrue(full.contains(line), line);
                compared++;
            }
        }
        assertEquals(9, compared);
    }

    @Test
    void csvAndJsonLinesGiveEqualEstimates() throws Exception {
        List<HouseEvent> events = tenWeeks();
        Path jsonInput = jsonl("events.jsonl", json(events));
        List<String> csv = new ArrayList<>();
        csv.add(HouseEvents.CSV_HEADER);
        for (HouseEvent event : events) {
            csv.add(event.csv());
        }
        Path csvInput = jsonl("events.csv", csv);
        replay(jsonInput, "json");
        ReplaySummary summary = replay(csvInput, "csv");
        assertEquals("csv", summary.format());
        assertEquals(events.size(), summary.records().outcome(Outcome.ACCEPTED));
        assertArrayEquals(Files.readAllBytes(dir.resolve("json").resolve(ReplayRunner.ESTIMATES)),
                Files.readAllBytes(dir.resolve("csv").resolve(ReplayRunner.ESTIMATES)));
    }

    @Test
    void malformedLinesAreReportedWithTheirLineAndNeverStopTheReplay() throws Exception {
        List<String> lines = json(tenWeeks().subList(0, 2000));
        lines.add(10, "{\"id\": \"x\", ");
        lines.add(20, "");
        lines.add(30, "[\"not\", \"an object\"]");
        lines.add(40, lines.get(35));
        Path input = jsonl("events.jsonl", lines);
        ReplaySummary summary = replay(input, "out");
        assertEquals(2003, summary.records().consumed(), "blank lines are not records");
        assertEquals(1, summary.records().reasons().get(RejectReason.MALFORMED_JSON));
        assertEquals(1, summary.records().reasons().get(RejectReason.NOT_AN_OBJECT));
        assertEquals(1, summary.records().outcome(Outcome.DUPLICATE));
        assertEquals(2000, summary.records().outcome(Outcome.ACCEPTED));
        List<String> rejects = lines("out", ReplayRunner.REJECTS);
        assertEquals(2, rejects.size());
        assertEquals(11, Json.mapper().readTree(rejects.get(0)).get("line").asInt());
        assertEquals("malformed-json", Json.mapper().readTree(rejects.get(0)).get("reason").asText());
        assertEquals(31, Json.mapper().readTree(rejects.get(1)).get("line").asInt());
        assertEquals("[\"not\", \"an object\"]", Json.mapper().readTree(rejects.get(1)).get("value").asText());
        assertEquals(2, summary.streams().size());
        assertTrue(summary.streams().get(0).windows() > 0);
    }

    /**
     * Bad Unicode costs only its record: a reject whose detail quotes an unpaired surrogate (an
     * JSON escape of U+D800 alone as a level) is written (the surrogate as U+FFFD) and the replay goes on; bytes
     * that are not well-formed UTF-8 are malformed-json: an encoded surrogate (ED A0 80), a code
     * point above U+10FFFF (F4 90 80 80) and the overlong form of "/" (C0 AF), which a lenient
     * decoder reads as "/". Source: Unicode Standard 15.0, section 3.9, table 3-7.
     */
    @Test
    void badUnicodeIsRejectedAndEveryRejectIsWritten() throws Exception {
        List<HouseEvent> events = tenWeeks().subList(0, 400);
        java.io.ByteArrayOutputStream file = new java.io.ByteArrayOutputStream();
        byte[][] bad = {{(byte) 0xED, (byte) 0xA0, (byte) 0x80}, {(byte) 0xF4, (byte) 0x90, (byte) 0x80, (byte) 0x80},
                {(byte) 0xC0, (byte) 0xAF}};
        for (int i = 0; i < events.size(); i++) {
            String line = events.get(i).json();
            if (i == 100) {
                line = line.replaceFirst("\"sex\":\"[a-z]+\"", "\"sex\":\"\\\\ud800\"");
            }
            if (i >= 200 && i < 203) {
                int at = line.indexOf("\"id\":\"") + 6;
                file.writeBytes(line.substring(0, at).getBytes(StandardCharsets.UTF_8));
                file.writeBytes(bad[i - 200]);
                file.writeBytes(line.substring(at).getBytes(StandardCharsets.UTF_8));
            } else {
                file.writeBytes(line.getBytes(StandardCharsets.UTF_8));
            }
            file.write('\n');
        }
        Path input = dir.resolve("unicode.jsonl");
        Files.write(input, file.toByteArray());
        ReplaySummary summary = replay(input, "out");
        assertEquals(400, summary.records().consumed());
        assertEquals(3, summary.records().reasons().get(RejectReason.MALFORMED_JSON));
        assertEquals(1, summary.records().reasons().get(RejectReason.UNKNOWN_LEVEL));
        List<String> rejects = lines("out", ReplayRunner.REJECTS);
        assertEquals(4, rejects.size());
        JsonNode level = Json.mapper().readTree(rejects.get(0));
        assertEquals(101, level.get("line").asInt());
        assertTrue(level.get("detail").asText().contains("\uFFFD"), level.get("detail").asText());
        for (int r = 1; r < 4; r++) {
            JsonNode reject = Json.mapper().readTree(rejects.get(r));
            assertEquals(200 + r, reject.get("line").asInt());
            assertEquals("malformed-json", reject.get("reason").asText());
            assertTrue(reject.get("detail").asText().startsWith("not valid UTF-8"), reject.get("detail").asText());
        }
    }

    /**
     * Twenty weeks, two regions, events up to two days out of order (some late); from week 9 the
     * household-contact log-odds ratio rises by 1.6, so the default rules raise alerts.
     */
    private Path driftingFile() throws IOException {
        return jsonl("drift.jsonl", json(HouseEvents.events(20260203, 12000, START, 20 * WEEK,
                Duration.ofDays(2).toMillis(), START.plusMillis(9 * WEEK), 1.6, "north", "south")));
    }

    /** The lines of {@code file} in {@code out} whose window lies in [from, to]. */
    private List<String> inRange(String out, String file, Instant from, Instant to) throws IOException {
        List<String> kept = new ArrayList<>();
        for (String line : lines(out, file)) {
            JsonNode node = Json.mapper().readTree(line);
            if (!Instant.parse(node.get("windowStart").asText()).isBefore(from)
                    && !Instant.parse(node.get("windowEnd").asText()).isAfter(to)) {
                kept.add(line);
            }
        }
        return kept;
    }

    @Test
    void aRangeReplayWritesTheFullReplaysWindowsOfTheRangeByteForByte() throws Exception {
        Path input = driftingFile();
        ReplaySummary full = replay(input, "full");
        Instant from = START.plusMillis(7 * WEEK);
        Instant to = START.plusMillis(15 * WEEK);
        ReplaySummary ranged = ReplayRunner.run(new ReplayRequest(definition(), input, dir.resolve("range"),
                null, from, to, null, false));
        List<String> estimates = lines("range", ReplayRunner.ESTIMATES);
        List<String> alerts = lines("range", ReplayRunner.ALERTS);
        assertFalse(estimates.isEmpty());
        assertFalse(alerts.isEmpty(), "the drift raises alerts inside the range");
        assertTrue(lines("full", ReplayRunner.ESTIMATES).size() > estimates.size(), "windows outside are left out");
        assertEquals(inRange("full", ReplayRunner.ESTIMATES, from, to), estimates);
        assertEquals(inRange("full", ReplayRunner.ALERTS, from, to), alerts);
        // The range starts after the fixed baseline period, which is still fitted.
        for (ReplaySummary.Stream stream : ranged.streams()) {
            assertEquals("frozen", stream.baseline(), stream.stream());
        }
        assertEquals(full.records(), ranged.records(), "every record is still read and counted");
        assertFalse(full.records().reasons().containsKey("outside-range"), "no event-time filter: nothing is left out");
    }

    /**
     * The replay command an alert names reproduces it, and exactly the alerts of the full replay in
     * its range. Checked for every message that opens or closes an episode and for the last
     * {@code continuing} message of each episode (the one with the longest range); the other
     * {@code continuing} messages differ from these only in their window.
     */
    @Test
    void everyAlertsOwnReplayCommandReproducesIt() throws Exception {
        Path input = driftingFile();
        replay(input, "full");
        List<String> alerts = lines("full", ReplayRunner.ALERTS);
        assertTrue(alerts.size() >= 2, "raised and continuing or cleared: " + alerts.size());
        Map<String, String> lastContinuing = new LinkedHashMap<>();
        List<String> checked = new ArrayList<>();
        for (String alert : alerts) {
            JsonNode json = Json.mapper().readTree(alert);
            if ("continuing".equals(json.get("state").asText())) {
                lastContinuing.put(json.get("id").asText(), alert);
            } else {
                checked.add(alert);
            }
        }
        checked.addAll(lastContinuing.values());
        // alerts that name the same command are checked against one replay of it
        Map<String, List<String>> byCommand = new LinkedHashMap<>();
        for (String alert : checked) {
            byCommand.computeIfAbsent(Json.mapper().readTree(alert).get("replayCommand").asText(), c -> new ArrayList<>())
                    .add(alert);
        }
        int round = 0;
        for (Map.Entry<String, List<String>> entry : byCommand.entrySet()) {
            String command = entry.getKey();
            List<String> args = List.of(command.split(" "));
            assertEquals(List.of("oddswatch", "replay"), args.subList(0, 2), command);
            Path config = Path.of(args.get(args.indexOf("--config") + 1));
            Path file = Path.of(args.get(args.indexOf("--input") + 1));
            Instant from = Instant.parse(args.get(args.indexOf("--from") + 1));
            Instant to = Instant.parse(args.get(args.indexOf("--to") + 1));
            assertEquals(input, file, "the command names the replayed file");
            String again = "again" + round++;
            ReplayRunner.run(new ReplayRequest(config, file, dir.resolve(again), null, from, to, null, false));
            for (String alert : entry.getValue()) {
                assertTrue(lines(again, ReplayRunner.ALERTS).contains(alert), "reproduced by " + command);
            }
            assertEquals(inRange("full", ReplayRunner.ALERTS, from, to), lines(again, ReplayRunner.ALERTS));
        }
        System.out.printf("%d alerts, %d checked, %d distinct replay commands%n", alerts.size(), checked.size(),
                byCommand.size());
    }

    /**
     * A CSV without the column of one term: the replay's summary, summary.json and report.md all
     * name the failed baseline (with the estimator's reason), the rules it stops, the rule switched
     * off, the windows no rule judged and the missing term; a healthy replay's report says nothing
     * was left unmonitored.
     */
    @Test
    void whatWasNotMonitoredShowsInTheSummaryAndTheReport() throws Exception {
        Path definition = dir.resolve("gaps.yaml");
        Files.writeString(definition, GapScenario.definition("clinic-tests"));
        Path events = jsonl("gaps.csv", GapScenario.csvLines());
        ReplaySummary summary = ReplayRunner.run(ReplayRequest.of(definition, events, dir.resolve("gaps")));
        assertEquals(GapScenario.EXPECTED, GapScenario.keys(summary.gaps()));
        ReplaySummary.Stream stream = summary.streams().get(0);
        assertEquals("failed", stream.baseline());
        assertTrue(stream.baselineNote().startsWith("cannot fit a baseline model on 2026-01-05T00:00:00Z"),
                stream.baselineNote());

        JsonNode json = Json.mapper().readTree(dir.resolve("gaps").resolve(ReplayRunner.SUMMARY).toFile());
        JsonNode written = json.path("streams").get(0);
        assertEquals(stream.baselineNote(), written.path("baselineNote").asText());
        assertEquals(GapScenario.EXPECTED.size(), written.path("gaps").size());
        assertEquals("baseline-failed", written.path("gaps").get(0).path("reason").asText());
        assertEquals(stream.baselineNote(), written.path("gaps").get(0).path("detail").asText());
        assertEquals("switched-off", written.path("gaps").get(3).path("reason").asText());
        assertEquals("smoker", written.path("gaps").get(6).path("subject").asText());
        assertEquals("term-missing", written.path("gaps").get(6).path("reason").asText());

        String report = Files.readString(dir.resolve("gaps").resolve("report.md"));
        String section = report.substring(report.indexOf("## Not monitored"), report.indexOf("## Stream clinic"));
        for (var gap : summary.gaps()) {
            assertTrue(section.contains("- " + gap.describe() + "\n"), gap.describe() + " in\n" + section);
        }
        assertTrue(section.contains("clinic: no baseline in use [baseline-failed]: cannot fit a baseline model"), section);
        assertTrue(section.contains("clinic: rule bernoulli-cusum not running [switched-off]: switched off in the "
                + "definition (rules.cusum.enabled: false)"), section);
        assertTrue(section.contains("clinic: term smoker missing from every event [term-missing]: none of the 1200 "
                + "accepted event(s) has a value for it"), section);

        // the house definition: no bounds are given, the first windows hold the baseline period, and
        // the last window (closed at the end of the file) holds a few days of events only
        ReplaySummary healthy = ReplayRunner.run(ReplayRequest.of(definition(), jsonl("healthy.jsonl",
                lines(tenWeeks())), dir.resolve("ok")));
        for (String region : List.of("north", "south")) {
            String s = "respiratory/" + region + ": ";
            assertEquals(List.of(s + "rule odds-ratio-bounds not running [not-configured]: it runs only on bounds the "
                    + "definition gives (oddsRatioBounds.terms)",
                    s + "1 final window(s) not judged by odds-ratio-drift [too-few-events]: fit state too-few-events "
                    + "(newest: the window ending 2026-04-06T00:00:00Z)",
                    s + "1 final window(s) not judged by calibration [too-few-events]: fit state too-few-events "
                    + "(newest: the window ending 2026-04-06T00:00:00Z)",
                    s + "7 final window(s) not judged by any rule [baseline-period]: the window overlaps the baseline "
                    + "period 2026-01-05T00:00:00Z to 2026-02-02T00:00:00Z, whose events are the baseline itself"),
                    healthy.gaps().stream().filter(g -> g.stream().endsWith(region)).map(g -> g.describe()).toList());
        }
        String nothing = ReplayReport.render(List.of(), List.of(), List.of(), "t");
        assertTrue(nothing.contains("## Not monitored\n\nNothing: every stream had its baseline"), nothing);
    }

    private static List<String> lines(List<HouseEvent> events) {
        List<String> lines = new ArrayList<>();
        for (HouseEvent event : events) {
            lines.add(event.json());
        }
        return lines;
    }
}
