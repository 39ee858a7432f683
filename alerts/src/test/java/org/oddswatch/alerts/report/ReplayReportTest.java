package org.oddswatch.alerts.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

class ReplayReportTest {

    private static WindowEstimate withCounts(WindowEstimate w, long events, long cases) {
        return new WindowEstimate(w.stream(), w.windowStart(), w.windowEnd(), w.status(), events, cases,
                new PrevalenceEstimate(cases / (double) events, 0.01, 0.2, "wilson", null), w.strata(), w.fit(),
                w.coefficients(), w.calibration(), w.notes());
    }

    @Test
    void reportListsWindowsAndAlertsWithCautionAndWithholdsSmallCounts(@TempDir Path dir) throws Exception {
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null);
        List<WindowEstimate> windows = List.of(Fixtures.windowWithZ(0, 0.5), Fixtures.windowWithZ(1, 4.2),
                withCounts(Fixtures.windowWithZ(2, 0.1), 60, 3), withCounts(Fixtures.windowWithZ(3, 0.1), 4, 0),
                withCounts(Fixtures.windowWithZ(4, 0.1), 40, 37));
        List<Alert> alerts = new ArrayList<>();
        for (WindowEstimate w : windows) {
            alerts.addAll(engine.onFinalEstimate(w));
        }
        Path file = ReplayReport.write(dir.resolve("out"), windows, alerts, "North, spring 2026");
        String md = Files.readString(file);
        assertEquals(dir.resolve("out/report.md"), file);
        assertTrue(md.startsWith("# North, spring 2026\n"), md);
        assertTrue(md.contains("calls for investigation; it is not a diagnosis or proof of cause"), md);
        assertTrue(md.contains("qualified epidemiologists decide what is done"), md);
        assertTrue(md.contains("## Stream respiratory-north"), md);
        // normal window: counts, prevalence with interval, odds ratio with interval
        assertTrue(md.contains("| 2026-04-06T00:00:00Z | 2026-04-13T00:00:00Z | 2,010 | 101 | 5.0% (4.2% to 6.1%, wilson)"),
                md);
        assertTrue(md.contains("household_contact=yes "), md);
        assertTrue(md.contains("raised odds-ratio-drift household_contact=yes"), md);
        // 3 positives: withheld with prevalence and odds ratios; 4 events (4 negatives): both withheld; 3 negatives: positives withheld
        assertTrue(md.contains("| 60 | <5 | withheld | converged (newton) | withheld |"), md);
        assertTrue(md.contains("| <5 | <5 | withheld |"), md);
        assertTrue(md.contains("| 40 | <5 | withheld |"), md);
        assertTrue(md.contains("### Alerts"), md);
        assertTrue(md.contains("Reproduce: `oddswatch replay --config"), md);
        assertEquals(md, ReplayReport.render(windows, alerts, "North, spring 2026"), "deterministic");
        // rows and the alert list name the measure, its value, the side of the limit and the limit
        assertTrue(md.contains("| raised odds-ratio-drift household_contact=yes (odds-ratio-z) |"), md);
        assertTrue(md.contains("odds-ratio-z 4.20 above the limit 3.00, observed "), md);
    }

    @Test
    void calibrationRowsNameTheMeasureNotTheSubjectTwice() {
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null);
        WindowEstimate w = Fixtures.window(0, 0.7, 0.15, Fixtures.fit(FitState.CONVERGED, FitMethod.NEWTON, 2000),
                Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 9.38e-6));
        List<Alert> alerts = engine.onFinalEstimate(w);
        String md = ReplayReport.render(List.of(w), alerts, null);
        assertTrue(!md.contains("calibration calibration"), md);
        assertTrue(md.contains("| raised calibration (hosmer-lemeshow-p) |"), md);
        assertTrue(md.contains("calibration (hosmer-lemeshow-p), window 2026-04-06T00:00:00Z to 2026-04-13T00:00:00Z:"
                + " hosmer-lemeshow-p 9.38e-06 below the limit 1.00e-04, on 2,000 events."), md);
    }

    @Test
    void emptyReplayStillCarriesTheCaution(@TempDir Path dir) throws Exception {
        String md = Files.readString(ReplayReport.write(dir, List.of(), List.of(), null));
        assertTrue(md.contains("No final windows and no alerts"), md);
        assertTrue(md.contains("not a diagnosis or proof of cause"), md);
    }
}
