package org.oddswatch.deploy.sandbox;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioOptions;
import org.oddswatch.ingest.pipeline.OutcomeCounts;

/** The sandbox's text from published JSON: estimates, the true values beside them, alerts, counts. */
class SandboxViewTest {

    private final SandboxView view = new SandboxView(Scenario.respiratory(ScenarioOptions.defaults()), 300000,
            Map.of("respiratory", Set.of("household_contact")));

    private static JsonNode estimate(String end, String status) throws IOException {
        return Json.mapper().readTree("{\"stream\":\"respiratory\",\"windowStart\":\"2026-03-30T00:00:00Z\","
                + "\"windowEnd\":\"" + end + "\",\"status\":\"" + status + "\",\"events\":8033,\"cases\":419,"
                + "\"prevalence\":{\"value\":0.0522,\"lower\":0.0475,\"upper\":0.0572,\"method\":\"wilson\"},"
                + "\"fit\":{\"state\":\"converged\",\"method\":\"newton\"},\"coefficients\":["
                + "{\"term\":\"intercept\",\"coef\":-3.1},"
                + "{\"term\":\"household_contact\",\"level\":\"yes\",\"reference\":\"no\",\"coef\":0.875,"
                + "\"oddsRatio\":2.40,\"lower\":1.97,\"upper\":2.93,\"interval\":\"wald\"},"
                + "{\"term\":\"recent_travel\",\"level\":\"yes\",\"coef\":0.6,\"oddsRatio\":1.86,\"lower\":1.4,\"upper\":2.4}]}");
    }

    @Test
    void finalLineShowsPrevalenceAndWatchedOddsRatiosWithTheTruthInForceAtTheWindowsLastInstant() throws IOException {
        // the doubling takes effect at 2026-04-27T00:00Z, the exclusive end of this window: truth still 2.5
        String line = view.finalLine(estimate("2026-04-27T00:00:00Z", "final"));
        assertEquals("final    respiratory 2026-03-30 to 04-27 final events 8033 cases 419 prevalence 0.0522 (0.0475-0.0572)"
                + " | household_contact=yes odds ratio 2.40 (1.97-2.93) true value at window end 2.50", line);
        // a week later the window's last instant lies after the change: truth 5.0; unwatched terms are not shown
        String later = view.finalLine(estimate("2026-05-04T00:00:00Z", "final"));
        assertTrue(later.endsWith("true value at window end 5.00"), later);
        assertTrue(!later.contains("recent_travel"), later);
    }

    @Test
    void alertLinesNameStateStreamRuleSubjectWindowAndEvidence() throws IOException {
        JsonNode drift = Json.mapper().readTree("{\"id\":\"a1\",\"stream\":\"respiratory\",\"rule\":\"odds-ratio-drift\","
                + "\"subject\":{\"term\":\"household_contact\",\"level\":\"yes\"},\"state\":\"raised\","
                + "\"windowStart\":\"2026-04-06T00:00:00Z\",\"windowEnd\":\"2026-05-04T00:00:00Z\",\"observed\":3.32,"
                + "\"baseline\":2.32,\"limit\":3.0,\"evidence\":{\"z\":3.14},\"events\":8038}");
        assertEquals("RAISED     respiratory odds-ratio-drift household_contact=yes, window ending 2026-05-04: "
                + "observed 3.32 vs baseline 2.32, z 3.14", view.alert(drift));
        JsonNode calibration = Json.mapper().readTree("{\"stream\":\"respiratory\",\"rule\":\"calibration\","
                + "\"subject\":{\"term\":\"calibration\"},\"state\":\"cleared\",\"windowEnd\":\"2026-06-01T00:00:00Z\","
                + "\"observed\":0.2,\"limit\":0.0001,\"evidence\":{}}");
        assertEquals("CLEARED    respiratory calibration, window ending 2026-06-01: observed 0.200 (limit 0.000100)",
                view.alert(calibration));
        // alerts that name their measure are shown by it, with the side of the limit
        JsonNode hl = Json.mapper().readTree("{\"stream\":\"respiratory\",\"rule\":\"calibration\","
                + "\"subject\":{\"term\":\"calibration\"},\"state\":\"raised\",\"windowEnd\":\"2026-06-01T00:00:00Z\","
                + "\"measure\":\"hosmer-lemeshow-p\",\"value\":9.38e-06,\"direction\":\"below\","
                + "\"observed\":9.38e-06,\"limit\":0.0001,\"evidence\":{}}");
        assertEquals("RAISED     respiratory calibration, window ending 2026-06-01: hosmer-lemeshow-p 9.38e-06 below 0.000100",
                view.alert(hl));
        JsonNode z = Json.mapper().readTree("{\"stream\":\"respiratory\",\"rule\":\"odds-ratio-drift\","
                + "\"subject\":{\"term\":\"household_contact\",\"level\":\"yes\"},\"state\":\"raised\","
                + "\"windowEnd\":\"2026-05-04T00:00:00Z\",\"measure\":\"odds-ratio-z\",\"value\":-3.14,"
                + "\"direction\":\"below\",\"observed\":1.2,\"baseline\":2.32,\"limit\":3.0}");
        assertEquals("RAISED     respiratory odds-ratio-drift household_contact=yes, window ending 2026-05-04: "
                + "odds-ratio-z -3.14 below -3.00, odds ratio 1.20 vs baseline 2.32", view.alert(z));
    }

    /** An open incident of one stream: a drift episode and a CUSUM episode whose value is withheld. */
    private static JsonNode incident(String stream) throws IOException {
        return Json.mapper().readTree(String.format(java.util.Locale.ROOT, "{\"id\":\"%s-incident\",\"revision\":2,"
                + "\"change\":\"opened\",\"streams\":[\"%s\"],\"from\":\"2026-04-27T00:00:00Z\",\"to\":"
                + "\"2026-05-04T00:00:00Z\",\"openEpisodes\":2,\"evidence\":[{\"episode\":\"e1\",\"stream\":\"%s\","
                + "\"rule\":\"odds-ratio-drift\",\"subject\":\"household_contact=yes\",\"state\":\"raised\","
                + "\"measure\":\"odds-ratio-z\",\"value\":3.1,\"direction\":\"above\",\"limit\":3.0},"
                + "{\"episode\":\"e2\",\"stream\":\"%s\",\"rule\":\"bernoulli-cusum-up\",\"subject\":"
                + "\"calibration\",\"state\":\"continuing\",\"measure\":\"cusum-log-likelihood-ratio\","
                + "\"direction\":\"above\",\"limit\":8.0,\"withheld\":[{\"field\":\"value\",\"reason\":"
                + "\"positives from 1 to 4\"}]}]}", stream.substring(stream.length() - 2), stream, stream, stream));
    }

    @Test
    void incidentLineNamesChangeStreamsAndEveryAgreeingRule() throws IOException {
        assertEquals("OPENED   07-incid from 2026-04-27, 2 episodes (2 open) on respiratory-by-clinic/clinic-07: odds-ratio-drift "
                + "household_contact=yes raised (odds-ratio-z 3.10 above 3.00); bernoulli-cusum-up continuing "
                + "(cusum-log-likelihood-ratio withheld, small numbers)",
                view.incident(incident("respiratory-by-clinic/clinic-07")));
    }

    @Test
    void screenHasPageCountsStreamsAlertsAndTheCaution() throws IOException {
        OutcomeCounts.Snapshot counts = new OutcomeCounts.Snapshot(110,
                Map.of("accepted", 100L, "rejected", 6L, "late", 3L, "duplicate", 1L),
                Map.of("bad-time", 6L, "late", 3L, "duplicate", 1L));
        SandboxView.Frame frame = new SandboxView.Frame("http://127.0.0.1:8470/", "oddswatch-sandbox.log", "127.0.0.1:9",
                "ready", Instant.parse("2026-05-06T12:00:00Z"), 110, false, counts,
                List.of(new OutputWatcher.StreamView("respiratory", estimate("2026-04-27T00:00:00Z", "final"),
                        estimate("2026-05-04T00:00:00Z", "interim"))), List.of(), List.of(), List.of(),
                SandboxLog.Notes.NONE);
        List<String> lines = view.screen(frame);
        String text = String.join("\n", lines);
        assertTrue(lines.get(0).startsWith("oddswatch sandbox   page http://127.0.0.1:8470/   log oddswatch-sandbox.log"),
                text);
        assertTrue(text.contains("simulated 2026-05-06 (week 17, invented data)"), text);
        assertTrue(text.contains("records  consumed 110: accepted 100, rejected 6, late 3, duplicate 1"), text);
        assertTrue(text.contains("duplicate 1; by reason: bad-time 6, duplicate 1, late 3"), text);
        // the newest final window: prevalence in percent, the watched odds ratio and the truth beside it
        assertTrue(lines.contains("        respiratory      04-27   8,033  5.22% (4.75-5.72)  "
                + "household_contact=yes 2.40 (1.97-2.93) 2.50"), text);
        assertTrue(text.contains("alerts   none so far"), text);
        assertTrue(text.contains("not monitored: nothing"), text);
        assertTrue(text.contains("log      no warnings"), text);
        assertEquals(SandboxView.CAUTION, lines.subList(lines.size() - 3, lines.size()), text);
        String caution = String.join(" ", SandboxView.CAUTION);
        assertTrue(caution.contains("A signal calls for investigation; it is not a diagnosis or proof of cause."), caution);
        assertTrue(caution.contains("Local public-health rules, data-protection law and qualified epidemiologists "
                + "decide what is done."), caution);
        assertTrue(SandboxView.CAUTION.stream().allMatch(l -> l.length() < 80), caution);
    }

    /**
     * Fifty streams, a hundred alert messages, every kind of gap and a dozen reject reasons: still one
     * screen of at most 20 lines (a 24-line terminal with the shell's prompt) no wider than an 80-column
     * terminal,
     * the streams with an open alert or a part not monitored first, and the failed baseline's reason shown.
     */
    @Test
    void screenStaysWithinTwentyLinesWhateverTheNumberOfStreamsAlertsAndGaps() throws IOException {
        List<OutputWatcher.StreamView> streams = new java.util.ArrayList<>();
        List<JsonNode> alerts = new java.util.ArrayList<>();
        List<MonitoringGap> gaps = new java.util.ArrayList<>();
        Map<String, Long> reasons = new java.util.TreeMap<>();
        for (int i = 0; i < 50; i++) {
            String stream = String.format(java.util.Locale.ROOT, "respiratory-by-clinic/clinic-%02d", i);
            JsonNode e = Json.mapper().readTree(estimate("2026-04-27T00:00:00Z", "final").toString()
                    .replace("\"respiratory\"", "\"" + stream + "\"").replace("8033", String.valueOf(1000 + i)));
            streams.add(new OutputWatcher.StreamView(stream, e, null));
            gaps.add(MonitoringGap.windows(stream, null, GapReason.BASELINE_PERIOD, "overlaps the baseline period", 12));
            reasons.put("reason-" + i, (long) i);
        }
        gaps.add(MonitoringGap.baseline("respiratory-by-clinic/clinic-07", GapReason.BASELINE_FAILED,
                "the fit did not converge"));
        gaps.add(MonitoringGap.rule("respiratory-by-clinic/clinic-08", "calibration", GapReason.SWITCHED_OFF,
                "enabled: false"));
        gaps.add(MonitoringGap.term("respiratory-by-clinic/clinic-09", "age_band", "no accepted event has it"));
        for (int i = 0; i < 100; i++) {
            alerts.add(Json.mapper().readTree(String.format(java.util.Locale.ROOT, "{\"stream\":"
                    + "\"respiratory-by-clinic/clinic-%02d\",\"rule\":\"odds-ratio-drift\",\"subject\":{\"term\":"
                    + "\"household_contact\",\"level\":\"yes\"},\"state\":\"%s\",\"windowEnd\":"
                    + "\"2026-05-04T00:00:00Z\",\"observed\":3.3,\"baseline\":2.3,\"evidence\":{\"z\":3.1}}",
                    20 + i % 10, i >= 90 && i % 10 == 1 ? "cleared" : "raised")));
        }
        // one open incident per clinic with an open episode, as the live API gives them (oldest first)
        List<JsonNode> incidents = new java.util.ArrayList<>();
        for (int c = 20; c < 30; c++) {
            if (c != 21) {
                incidents.add(incident(String.format(java.util.Locale.ROOT, "respiratory-by-clinic/clinic-%02d", c)));
            }
        }
        OutcomeCounts.Snapshot counts = new OutcomeCounts.Snapshot(99_999, Map.of("accepted", 90_000L,
                "rejected", 9_999L), reasons);
        SandboxView narrow = new SandboxView(Scenario.respiratory(ScenarioOptions.defaults()), 300000,
                Map.of("respiratory-by-clinic", Set.of("household_contact")), 80);
        List<String> lines = narrow.screen(new SandboxView.Frame("http://127.0.0.1:8470/", "oddswatch-sandbox.log",
                "127.0.0.1:9", "ready", Instant.parse("2026-05-06T12:00:00Z"), 99_999, false, counts, streams, alerts,
                incidents, gaps, new SandboxLog.Notes(3, "WARN MonitorService: something a person should read")));
        String text = String.join("\n", lines);
        assertTrue(lines.size() <= 20, lines.size() + " lines:\n" + text);
        assertTrue(lines.stream().allMatch(l -> l.length() <= 80), text);
        assertTrue(lines.stream().anyMatch(l -> l.length() == 80 && l.endsWith("...")), "long lines are cut:\n" + text);
        assertTrue(text.contains("streams  4 of 50"), text);
        // open alerts first (clinics 20..29 except 21, cleared last), newest of them first
        assertTrue(lines.stream().anyMatch(l -> l.startsWith("  alert respiratory-by-clinic/clinic-29")), text);
        assertTrue(lines.stream().noneMatch(l -> l.startsWith("  gap ") || l.startsWith("        respiratory")), text);
        // the parts not monitored: a failed baseline, a rule switched off before windows not judged
        assertTrue(text.contains("not monitored: 53, the first 2 shown"), text);
        // at 80 columns the reason's code is shown, its words may be cut
        assertTrue(text.contains("  respiratory-by-clinic/clinic-07: no baseline in use [baseline-failed]: the "), text);
        assertTrue(text.contains("  respiratory-by-clinic/clinic-08: rule calibration not running [switched-off"), text);
        // the open incidents, not each episode: newest first, three of them, each with its evidence
        assertTrue(lines.contains("incidents 9 open (one per change, newest first); 9 alert episode(s) open"), text);
        // (cut at 80 columns: the rest is on the live page)
        int first = lines.indexOf("incidents 9 open (one per change, newest first); 9 alert episode(s) open") + 1;
        assertTrue(lines.get(first).startsWith("  OPENED   29-incid from 2026-04-27, 2 episodes (2 open) on "
                + "respiratory-by-cl..."), text);
        assertTrue(lines.get(first + 1).startsWith("  OPENED   28-incid ") && lines.get(first + 2).startsWith("  OPENED   27-incid "),
                text);
        assertEquals(3, lines.stream().filter(l -> l.startsWith("  OPENED ")).count(), text);
        assertTrue(text.contains("log      3 warning(s), the newest: WARN MonitorService: something"), text);
        assertEquals(SandboxView.CAUTION, lines.subList(lines.size() - 3, lines.size()), text);
    }
}
