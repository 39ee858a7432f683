package org.oddswatch.alerts.report.html;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;
import org.oddswatch.estimator.result.WindowEstimate;

class HtmlReportTest {

    private static final String ISLAND = "<script type=\"application/json\" id=\"oddswatch-data\">";

    /** The page's data island, parsed back. */
    static JsonNode island(String html) throws Exception {
        int from = html.indexOf(ISLAND) + ISLAND.length();
        return Json.mapper().readTree(html.substring(from, html.indexOf("</script>", from)));
    }

    private static WindowEstimate with(WindowEstimate w, String stream, long events, long cases,
                                       List<StratumPrevalence> strata, List<CoefficientEstimate> extra,
                                       List<String> notes) {
        List<CoefficientEstimate> coefficients = new ArrayList<>(w.coefficients());
        coefficients.addAll(extra);
        return new WindowEstimate(stream, w.windowStart(), w.windowEnd(), w.status(), events, cases,
                new PrevalenceEstimate(cases / (double) events, 0.0415, 0.0607, "wilson", null), strata, w.fit(),
                coefficients, w.calibration(), notes);
    }

    private static StratumPrevalence stratum(String level, long events, long cases) {
        return new StratumPrevalence("age_band", level, events, cases, cases / (double) events, 0.01, 0.2);
    }

    @Test
    void titleStreamNamesAndCommandsCannotCloseTheScriptOrAddMarkup() throws Exception {
        String hostile = "north</script><script>alert(1)</script> & <b> <!-- \u2028\u2029";
        WindowEstimate w = with(Fixtures.windowWithZ(0, 0.5), hostile, 2010, 101, List.of(), List.of(), List.of());
        String html = HtmlReport.render(List.of(w), List.of(), "Spring </title><script>x()</script>",
                ReportOptions.withholding(SmallCellPolicy.DEFAULT));
        assertEquals(3, count(html.toLowerCase(Locale.ROOT), "</script"), "only the page's own three script elements");
        assertTrue(html.contains("<title>Spring &lt;/title&gt;&lt;script&gt;x()&lt;/script&gt;</title>"), html.substring(0, 600));
        assertFalse(html.contains("<b>"));
        assertFalse(html.contains("<!--"), "no comment can open inside a script");
        assertFalse(html.contains("\u2028") || html.contains("\u2029"), "line separators are escaped");
        JsonNode data = island(html);
        assertEquals(hostile, data.get("streams").get(0).get("name").asText(), "JSON.parse gives the original text back");
        assertTrue(html.contains("Content-Security-Policy\" content=\"default-src 'none';"), "no request is allowed");
        assertTrue(html.contains("not a diagnosis or proof of cause"));
        assertFalse(html.contains("sourceMappingURL"), "no source-map request");
        assertTrue(html.contains("Chart.js v" + ChartLibrary.VERSION), "the library's licence banner is kept");
    }

    @Test
    void smallCellsAreLeftOutOfTheDataNotCharted() throws Exception {
        List<StratumPrevalence> strata = List.of(stratum("0-17", 3, 1), stratum("18-39", 900, 40),
                stratum("40-64", 700, 35), stratum("65+", 410, 25));
        List<WindowEstimate> windows = List.of(
                with(Fixtures.windowWithZ(0, 0.5), "s", 2010, 101, strata, List.of(), List.of("note zero")),
                with(Fixtures.window(1, 0.7, 0.2, Fixtures.fit(FitState.SEPARATION, FitMethod.FIRTH, 60), null), "s",
                        60, 3, List.of(), List.of(), List.of("one level has no positives")),
                with(Fixtures.windowWithZ(2, 0.1), "s", 4, 0, List.of(), List.of(), List.of()),
                with(Fixtures.windowWithZ(3, 0.1), "s", 40, 37, List.of(), List.of(), List.of()));
        JsonNode s = island(HtmlReport.render(windows, List.of(), "t", ReportOptions.withholding(SmallCellPolicy.DEFAULT))).get("streams").get(0);
        // window 1: 3 positives; window 2: 4 events; window 3: 3 negatives
        assertEquals("[2010,60,null,40]", s.get("events").toString());
        assertEquals("[101,null,null,null]", s.get("positives").toString());
        assertTrue(s.get("prevalence").get("v").get(0).isNumber());
        for (int i = 1; i < 4; i++) {
            assertTrue(s.get("prevalence").get("v").get(i).isNull(), "prevalence withheld in window " + i);
            assertTrue(s.get("terms").get(0).get("v").get(i).isNull(), "odds ratio withheld in window " + i);
        }
        // stratum 0-17 has 3 events; 65+ (fewest events of the rest) is withheld so 0-17 cannot be worked out
        JsonNode st = s.get("strata");
        assertTrue(st.get(0).get("v").get(0).isNull());
        assertTrue(st.get(3).get("v").get(0).isNull());
        assertTrue(st.get(1).get("v").get(0).isNumber() && st.get(2).get("v").get(0).isNumber());
        assertEquals(3, s.get("withheldWindows").asInt());
        // the separation window's note is shown, but its text rests on a small count
        assertEquals(1, s.get("notes").size());
        assertEquals("separation", s.get("notes").get(0).get("state").asText());
        assertFalse(s.get("notes").toString().contains("no positives"));
    }

    @Test
    void rejectsCountAtTheFirstWindowEndAfterTheirTime() {
        long[] ends = {1000, 2000, 3000};
        JsonNode r = RejectBuckets.of(ends, List.of(new RejectMark("s", "bad-outcome", Instant.ofEpochMilli(10)),
                new RejectMark("s", "bad-outcome", Instant.ofEpochMilli(999)),
                new RejectMark("s", "bad-outcome", Instant.ofEpochMilli(1000)),
                new RejectMark("s", "late", Instant.ofEpochMilli(2999)),
                new RejectMark("s", "late", Instant.ofEpochMilli(3000)),
                new RejectMark("s", "bad-time", null)));
        // the end is exclusive: a record at exactly 1000 belongs to the window ending at 2000
        assertEquals("[2,1,0]", r.get("byReason").get(0).get("n").toString());
        assertEquals("late", r.get("byReason").get(1).get("reason").asText());
        assertEquals("[0,0,1]", r.get("byReason").get(1).get("n").toString());
        assertEquals(1, r.get("afterLastWindow").get("late").asInt());
        assertEquals(1, r.get("timeUnknown").get("bad-time").asInt());
    }

    @Test
    void theRuleSettingsLimitsAreDrawnEvenWhereNoAlertCrossedThem() throws Exception {
        AlertRulesConfig rules = new AlertRulesConfig(null, new AlertRulesConfig.OddsRatioDrift(3.5, null, null, null,
                null, null), new AlertRulesConfig.OddsRatioBounds(List.of(new AlertRulesConfig.TermBounds(
                "household_contact", null, 6.0, 1.0)), null, null, null),
                new AlertRulesConfig.Calibration(new AlertRulesConfig.Band(0.75, null), null, null, null, null, null, null),
                new AlertRulesConfig.Cusum(null, null, 9.0, null, null, null, null));
        List<WindowEstimate> windows = List.of(Fixtures.window(0, 0.7, 0.15, Fixtures.fit(FitState.CONVERGED,
                FitMethod.NEWTON, 2000), Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 0.5)));
        JsonNode lines = island(HtmlReport.render(windows, List.of(), "t",
                ReportOptions.withholding(SmallCellPolicy.DEFAULT).withRules(stream -> rules))).get("streams").get(0).get("lines");
        // band ends left out are derived per stream from the false-alarm budget, not drawn from the rules
        assertEquals("[0.75]", lines.get("oe").get("limits").toString(), "the set minimum only");
        assertFalse(lines.path("slope").has("limits"), "the slope band is left to the budget");
        assertEquals("[1.0,6.0]", lines.get("or:household_contact=yes").get("limits").toString());
        assertTrue(lines.get("or:household_contact=yes").get("note").asText().contains("|z| ≥ 3.50"));
        assertEquals("CUSUM charts (limit h = 9.00): no signal in this replay.", lines.get("cusumNote").asText());
        JsonNode none = island(HtmlReport.render(windows, List.of(), "t", ReportOptions.withholding(SmallCellPolicy.DEFAULT)))
                .get("streams").get(0).get("lines");
        assertEquals(0, none.size(), "no settings, no lines");
    }

    @Test
    void sameInputGivesTheSamePage() {
        List<WindowEstimate> windows = year("s");
        List<Alert> alerts = alerts(windows);
        assertEquals(HtmlReport.render(windows, alerts, "t", ReportOptions.withholding(SmallCellPolicy.DEFAULT)),
                HtmlReport.render(windows, alerts, "t", ReportOptions.withholding(SmallCellPolicy.DEFAULT)));
    }

    /**
     * A year of weekly windows for ten streams (four strata, seven coefficients, calibration, fit
     * notes, every alert the default rules raise, a reject a day) stays under 3 MB.
     */
    @Test
    void aYearOfWeeklyWindowsForTenStreamsStaysUnderThreeMegabytes(@TempDir Path dir) throws Exception {
        List<WindowEstimate> windows = new ArrayList<>();
        List<Alert> alerts = new ArrayList<>();
        List<RejectMark> rejects = new ArrayList<>();
        for (int s = 0; s < 10; s++) {
            List<WindowEstimate> stream = year("respiratory/region-" + s);
            windows.addAll(stream);
            alerts.addAll(alerts(stream));
            for (int day = 0; day < 364; day++) {
                rejects.add(new RejectMark("respiratory/region-" + s, day % 3 == 0 ? "late" : "bad-outcome",
                        Fixtures.start(-1).plusSeconds(86_400L * day)));
            }
        }
        Path file = HtmlReport.write(dir, windows, alerts, "A year of ten streams",
                ReportOptions.withholding(SmallCellPolicy.DEFAULT).withRejects(rejects).withRules(stream -> Fixtures.earlierDefaults()));
        long bytes = Files.size(file);
        String html = Files.readString(file, StandardCharsets.UTF_8);
        assertEquals(10, island(html).get("streams").size());
        assertTrue(alerts.size() > 20, "alerts in the page: " + alerts.size());
        Files.writeString(Path.of("target", "html-report-size.txt"), String.format(Locale.ROOT,
                "report.html, 52 weekly windows x 10 streams, %d alerts: %,d bytes (data island %,d, Chart.js %,d)%n",
                alerts.size(), bytes, island(html).toString().length(), ChartLibrary.SCRIPT.length()));
        assertTrue(bytes < 3_000_000, "report.html is " + bytes + " bytes");
    }

    /** 52 weekly windows of one stream: drift from week 30, a non-converged fit every 13 weeks. */
    private static List<WindowEstimate> year(String name) {
        List<WindowEstimate> windows = new ArrayList<>();
        for (int week = 0; week < 52; week++) {
            double z = week < 30 ? 0.3 * Math.sin(week) : 3.5 + 0.2 * Math.cos(week);
            WindowEstimate base = Fixtures.windowWithZ(week, z);
            if (week % 13 == 12) {
                base = Fixtures.window(week, 0.7, 0.3, Fixtures.fit(FitState.TOO_FEW_EVENTS, FitMethod.NEWTON, 2010),
                        Fixtures.calibration(1.1, 0.9, 1.3, 0.95, 0.1, 0.5));
            } else {
                base = Fixtures.window(week, base.coefficient("household_contact", "yes").coef(), 0.15,
                        base.fit(), Fixtures.calibration(1.0 + 0.01 * week, 0.85, 1.2 + 0.01 * week, 1.0, 0.1, 0.4));
            }
            List<CoefficientEstimate> extra = new ArrayList<>();
            for (String level : List.of("0-17", "40-64", "65+")) {
                extra.add(new CoefficientEstimate("age_band", level, "18-39", null, 0.2, 0.11, 1.8, 0.07,
                        Math.exp(0.2), Math.exp(0.2 - 0.2156), Math.exp(0.2 + 0.2156), "wald", 0.98, 1.51, 3.3, 3, 0.35));
            }
            extra.add(new CoefficientEstimate("sex", "male", "female", null, -0.1, 0.09, -1.1, 0.27, Math.exp(-0.1),
                    Math.exp(-0.1 - 0.1764), Math.exp(-0.1 + 0.1764), "wald", null, null, null, null, null));
            windows.add(with(base, name, 2010, 101, List.of(stratum("0-17", 400, 18), stratum("18-39", 620, 30),
                    stratum("40-64", 590, 29), stratum("65+", 400, 24)), extra,
                    week % 13 == 12 ? List.of("only 101 events of the rarer outcome for 11 parameters") : List.of()));
        }
        return windows;
    }

    private static List<Alert> alerts(List<WindowEstimate> windows) {
        AlertEngine engine = new AlertEngine(windows.get(0).stream(), Fixtures.earlierDefaults(), Fixtures.baseline(),
                null);
        List<Alert> alerts = new ArrayList<>();
        windows.forEach(w -> alerts.addAll(engine.onFinalEstimate(w)));
        return alerts;
    }

    private static int count(String text, String part) {
        int n = 0;
        for (int i = text.indexOf(part); i >= 0; i = text.indexOf(part, i + 1)) {
            n++;
        }
        return n;
    }
}
