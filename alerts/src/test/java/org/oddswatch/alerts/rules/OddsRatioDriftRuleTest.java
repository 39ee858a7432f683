package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.oddswatch.alerts.Fixtures.baseline;
import static org.oddswatch.alerts.Fixtures.windowWithZ;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioDrift;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermLimits;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;

class OddsRatioDriftRuleTest {

    private static final double EPS = 1e-6;

    private static AlertEngine engine(OddsRatioDrift drift, Guard guard) {
        return new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(guard, drift, null, null, null), baseline(), null);
    }

    private static OddsRatioDrift drift(Double limit, Double clear, Integer k, Integer m) {
        return new OddsRatioDrift(limit, clear, k, m, null, null);
    }

    /** States emitted over a sequence of z values, one final weekly window each ("-" when silent). */
    private static String run(AlertEngine engine, double... zs) {
        StringBuilder b = new StringBuilder();
        for (int w = 0; w < zs.length; w++) {
            List<Alert> alerts = engine.onFinalEstimate(windowWithZ(w, zs[w]));
            b.append(alerts.isEmpty() ? "-" : alerts.get(0).state().toString().substring(0, 2)).append(' ');
            assertTrue(alerts.size() <= 1, "one watched term reads drift, at most one message per window");
        }
        return b.toString().trim();
    }

    @Test
    void zIsTheDifferenceOverTheCombinedStandardError() {
        Alert a = engine(drift(null, null, null, null), null).onFinalEstimate(Fixtures.window(0, 1.5, 0.2)).get(0);
        double expected = (1.5 - 0.7) / Math.sqrt(0.04 + 0.0064);
        assertEquals(expected, a.evidence().z(), 1e-12);
        assertEquals(Math.exp(1.5), a.observed(), 1e-12);
        assertEquals(Math.exp(0.7), a.baseline(), 1e-12);
        assertEquals(3.0, a.limit());
        assertEquals("household_contact", a.subject().term());
        assertEquals("yes", a.subject().level());
    }

    @Test
    void raiseLimitIsInclusiveOnBothSides() {
        assertEquals("ra", run(engine(drift(null, null, null, null), null), 3.0 + EPS));
        assertEquals("-", run(engine(drift(null, null, null, null), null), 3.0 - EPS));
        assertEquals("ra", run(engine(drift(null, null, null, null), null), -3.0 - EPS));
        assertEquals("-", run(engine(drift(null, null, null, null), null), -3.0 + EPS));
    }

    @Test
    void clearLimitIsExclusiveAndNeedsMWindowsInARow() {
        // default clear limit 2.0, clearAfter 2
        assertEquals("ra - cl", run(engine(drift(null, null, null, null), null), 3.5, 2.0 - EPS, 1.0));
        assertEquals("ra - - - cl", run(engine(drift(null, null, null, null), null), 3.5, 2.0 - EPS, 2.0 + EPS, 1.9, 0.0));
        // a window in the hysteresis band keeps the episode open and says nothing
        assertEquals("ra - - - -", run(engine(drift(null, null, null, null), null), 3.5, 2.5, 2.9, 2.0, 2.99));
        // m = 3
        assertEquals("ra - - cl", run(engine(drift(null, null, null, 3), null), 3.5, 0.0, 0.0, 0.0));
    }

    @Test
    void continuingOncePerFinalWindowWhileBeyondAndNoSecondRaise() {
        assertEquals("ra co co - co - cl ra", run(engine(drift(null, null, null, null), null),
                3.1, 4.0, -3.2, 2.5, 3.3, 0.0, 0.0, 3.0 + EPS));
    }

    @Test
    void kConsecutiveWindowsInOneDirection() {
        AlertEngine k2 = engine(drift(null, null, 2, null), null);
        assertEquals("- - - - ra", run(k2, 3.5, 2.9, 3.5, -3.5, -3.5));
        AlertEngine k3 = engine(drift(2.5, 1.5, 3, 1), null);
        assertEquals("- - - - - ra co cl", run(k3, 2.6, 2.6, 1.0, 2.6, 2.6, 2.7, 3.0, 1.4));
    }

    @Test
    void perTermOverridesWin() {
        OddsRatioDrift d = new OddsRatioDrift(null, null, null, null,
                List.of(new TermLimits("household_contact", "yes", 4.0, 1.0, null, null)), null);
        assertEquals("- ra - - cl", run(engine(d, null), 3.9, 4.1, 1.5, 0.5, 0.9));
    }

    @Test
    void unwatchedTermsAreLeftOutUnlessNamed() {
        AlertEngine byDefault = engine(drift(null, null, null, null), null);
        // age_years drifts hugely (coef 0.1 vs baseline 0.1 → no; push it via window with z on household only)
        assertEquals(1, byDefault.onFinalEstimate(windowWithZ(0, 5)).size());
        OddsRatioDrift named = new OddsRatioDrift(null, null, null, null, List.of(TermLimits.of("age_years")), null);
        // age coefficient 0.1 equals the baseline 0.1: named but not drifting, household not selected
        assertEquals(0, engine(named, null).onFinalEstimate(windowWithZ(0, 5)).size());
    }

    @Test
    void guardRefusesUnusableFitsAndBreaksTheRun() {
        AlertEngine e = engine(drift(null, null, 2, null), null);
        assertEquals("-", stateOf(e, windowWithZ(0, 4.0)));
        assertEquals("-", stateOf(e, withFit(1, 4.0, FitState.NOT_CONVERGED, FitMethod.NEWTON, 2000)));
        assertEquals("-", stateOf(e, windowWithZ(2, 4.0)));
        assertEquals("ra", stateOf(e, windowWithZ(3, 4.0)));

        for (FitState refused : List.of(FitState.NOT_CONVERGED, FitState.SEPARATION, FitState.RANK_DEFICIENT,
                FitState.TOO_FEW_EVENTS, FitState.NO_MODEL)) {
            AlertEngine g = engine(drift(null, null, null, null), null);
            assertEquals("-", stateOf(g, withFit(0, 5.0, refused, FitMethod.NEWTON, 2000)), refused.toString());
        }
        // a Firth fit under separation counts as fitted, unless the definition says otherwise
        assertEquals("ra", stateOf(engine(drift(null, null, null, null), null),
                withFit(0, 5.0, FitState.SEPARATION, FitMethod.FIRTH, 2000)));
        assertEquals("-", stateOf(engine(drift(null, null, null, null), new Guard(null, false, null)),
                withFit(0, 5.0, FitState.SEPARATION, FitMethod.FIRTH, 2000)));
        // allowed states
        assertEquals("ra", stateOf(engine(drift(null, null, null, null), new Guard(List.of("too-few-events"), null, null)),
                withFit(0, 5.0, FitState.TOO_FEW_EVENTS, FitMethod.NEWTON, 2000)));
        // minimum events: inclusive
        assertEquals("-", stateOf(engine(drift(null, null, null, null), new Guard(null, null, 500L)),
                withFit(0, 5.0, FitState.CONVERGED, FitMethod.NEWTON, 499)));
        assertEquals("ra", stateOf(engine(drift(null, null, null, null), new Guard(null, null, 500L)),
                withFit(0, 5.0, FitState.CONVERGED, FitMethod.NEWTON, 500)));
        // the rule's own guard wins over the shared one
        OddsRatioDrift own = new OddsRatioDrift(null, null, null, null, null, new Guard(null, null, 10L));
        assertEquals("ra", stateOf(engine(own, new Guard(null, null, 5000L)),
                withFit(0, 5.0, FitState.CONVERGED, FitMethod.NEWTON, 2000)));
    }

    @Test
    void refusedWindowsNeitherClearNorContinue() {
        AlertEngine e = engine(drift(null, null, null, null), null);
        assertEquals("ra", stateOf(e, windowWithZ(0, 4.0)));
        assertEquals("-", stateOf(e, withFit(1, 0.0, FitState.NO_MODEL, FitMethod.NEWTON, 2000)));
        assertEquals("-", stateOf(e, windowWithZ(2, 0.0)));
        assertEquals("-", stateOf(e, withFit(3, 0.0, FitState.NOT_CONVERGED, FitMethod.NEWTON, 2000)));
        assertEquals("-", stateOf(e, windowWithZ(4, 0.0)));
        assertEquals("cl", stateOf(e, windowWithZ(5, 0.0)));
    }

    @Test
    void droppedColumnsSayNothing() {
        AlertEngine e = engine(drift(null, null, null, null), null);
        // the window dropped the column (no standard error)
        assertEquals("-", stateOf(e, Fixtures.window(0, 3.0, Double.NaN)));
        // the baseline has a NaN variance for it
        var broken = new org.oddswatch.estimator.calibration.BaselineModel(Fixtures.columns(),
                new double[] {-3.0, 0.7, 0.1}, new double[][] {{0.0025, 0, 0}, {0, Double.NaN, 0}, {0, 0, 0.0004}},
                "2026-01-05T00:00:00Z", "2026-03-30T00:00:00Z", 24000, 1210, null);
        AlertEngine b = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, drift(null, null, null, null), null,
                null, null), broken, null);
        assertEquals("-", stateOf(b, windowWithZ(0, 8.0)));
    }

    @Test
    void interimAndBaselinePeriodWindowsAreIgnored() {
        AlertEngine e = engine(drift(null, null, null, null), null);
        var w = windowWithZ(0, 5.0);
        var interim = new org.oddswatch.estimator.result.WindowEstimate(w.stream(), w.windowStart(), w.windowEnd(),
                org.oddswatch.estimator.result.WindowStatus.INTERIM, w.events(), w.cases(), w.prevalence(), w.strata(),
                w.fit(), w.coefficients(), w.calibration(), w.notes());
        assertEquals(0, e.onFinalEstimate(interim).size());
        var inBaseline = new org.oddswatch.estimator.result.WindowEstimate(w.stream(),
                java.time.Instant.parse("2026-03-25T00:00:00Z"), java.time.Instant.parse("2026-04-01T00:00:00Z"),
                w.status(), w.events(), w.cases(), w.prevalence(), w.strata(), w.fit(), w.coefficients(),
                w.calibration(), w.notes());
        assertEquals(0, e.onFinalEstimate(inBaseline).size());
        assertEquals(AlertState.RAISED, e.onFinalEstimate(w).get(0).state());
    }

    private static String stateOf(AlertEngine e, org.oddswatch.estimator.result.WindowEstimate w) {
        List<Alert> a = e.onFinalEstimate(w);
        return a.isEmpty() ? "-" : a.get(0).state().toString().substring(0, 2);
    }

    private static org.oddswatch.estimator.result.WindowEstimate withFit(int week, double z, FitState state,
                                                                          FitMethod method, long events) {
        var w = windowWithZ(week, z);
        return Fixtures.window(week, w.coefficient("household_contact", "yes").coef(),
                w.coefficient("household_contact", "yes").se(), Fixtures.fit(state, method, events), null);
    }
}
