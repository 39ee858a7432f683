package org.oddswatch.alerts.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.report.ReplayReport;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;

/** What an engine reports as not monitored: rules off, and the windows a running rule did not judge, by reason. */
class AlertEngineGapsTest {

    private static List<String> keys(List<MonitoringGap> gaps) {
        return gaps.stream().map(g -> g.scope() + "|" + g.subject() + "|" + g.reason() + "|" + g.windows()).toList();
    }

    @Test
    void rulesOffAndRulesWithoutABaselineAreListedWithTheirReason() {
        AlertRulesConfig cusumOff = new AlertRulesConfig(null, Fixtures.earlierDefaults().oddsRatioDrift(), null,
                Fixtures.earlierDefaults().calibration(), null);
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, cusumOff, null, null);
        assertEquals(List.of("rule|odds-ratio-drift|baseline-failed|null", "rule|odds-ratio-bounds|not-configured|null",
                "rule|calibration|baseline-failed|null", "rule|bernoulli-cusum|switched-off|null"),
                keys(engine.gaps(GapReason.BASELINE_FAILED, "no positives")));
        assertEquals("no positives", engine.gaps(GapReason.BASELINE_FAILED, "no positives").get(0).detail());
        AlertEngine withBaseline = new AlertEngine(Fixtures.STREAM, cusumOff, Fixtures.baseline(), null);
        assertEquals(List.of("rule|odds-ratio-bounds|not-configured|null", "rule|bernoulli-cusum|switched-off|null"),
                keys(withBaseline.gaps(null, null)), "the baseline's rules run");
    }

    /**
     * Each window a rule's guard refuses is counted once per rule and reason, whatever the number of
     * subjects the rule reads; judged windows are not counted.
     */
    @Test
    void windowsNotJudgedAreCountedByRuleAndReason() {
        AlertRulesConfig driftOnly = new AlertRulesConfig(null, Fixtures.earlierDefaults().oddsRatioDrift(), null,
                null, null);
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, driftOnly, Fixtures.baseline(), null);
        engine.onFinalEstimate(Fixtures.windowWithZ(0, 0.5));
        engine.onFinalEstimate(Fixtures.window(1, 0.7, 0.1, Fixtures.fit(FitState.NOT_CONVERGED, FitMethod.NEWTON,
                2000), null));
        engine.onFinalEstimate(Fixtures.window(2, 0.7, 0.1, Fixtures.fit(FitState.CONVERGED, FitMethod.NEWTON, 99),
                null));
        engine.onFinalEstimate(Fixtures.window(3, 0.7, 0.1, Fixtures.fit(FitState.CONVERGED, FitMethod.NEWTON, 50),
                null));
        engine.onFinalEstimate(Fixtures.window(4, 0.7, 0.1, Fixtures.fit(FitState.NO_MODEL, FitMethod.NEWTON, 0),
                null));
        engine.onFinalEstimate(Fixtures.window(5, 0.7, 0.1, Fixtures.fit(FitState.CONVERGED, FitMethod.NEWTON, 100),
                null));
        List<MonitoringGap> gaps = engine.gaps(null, null);
        assertEquals(List.of("rule|odds-ratio-bounds|not-configured|null", "rule|calibration|switched-off|null",
                "rule|bernoulli-cusum|switched-off|null", "windows|odds-ratio-drift|fit-unusable|1",
                "windows|odds-ratio-drift|too-few-events|2", "windows|odds-ratio-drift|no-fit|1"), keys(gaps));
        // the guard's minimum is 100 events (the default): 99 is refused, 100 judged
        assertEquals("50 events, fewer than the minimum 100 (newest: the window ending 2026-05-04T00:00:00Z)",
                gaps.get(4).detail());
        assertEquals("respiratory-north: 2 final window(s) not judged by odds-ratio-drift [too-few-events]: 50 events, "
                + "fewer than the minimum 100 (newest: the window ending 2026-05-04T00:00:00Z)", gaps.get(4).describe());
        String report = ReplayReport.render(List.of(), List.of(), gaps, "t");
        assertTrue(report.contains("\n## Not monitored\n\n"), report);
        assertTrue(report.contains("- " + gaps.get(3).describe() + "\n"), report);
        assertTrue(!ReplayReport.render(List.of(), List.of(), "t").contains("Not monitored"), "no list, no section");
    }
}
