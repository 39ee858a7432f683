package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.Band;
import org.oddswatch.alerts.engine.AlertRulesConfig.Calibration;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

class CalibrationRuleTest {

    private static AlertEngine engine() {
        // the earlier default bands, given explicitly (left out, the budget would derive them)
        Calibration c = new Calibration(new Band(0.8, 1.25), new Band(0.7, 1.3), null, null, null, null, null);
        return new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null, c, null), Fixtures.baseline(), null);
    }

    private static WindowEstimate w(int week, CalibrationEstimate c) {
        return Fixtures.window(week, 0.7, 0.15, Fixtures.fit(FitState.CONVERGED, FitMethod.NEWTON, 2000), c);
    }

    private static CalibrationEstimate fine() {
        return Fixtures.calibration(1.0, 0.82, 1.2, 1.0, 0.1, 0.5);
    }

    private static String state(AlertEngine e, WindowEstimate w) {
        List<Alert> a = e.onFinalEstimate(w);
        return a.isEmpty() ? "-" : a.get(0).state().toString().substring(0, 2);
    }

    @Test
    void bandEndsLeftOutRunAtTheValuesTheBudgetDerives() {
        AlertEngine e = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null,
                new Calibration(null, null, null, null, null, null, null), null), Fixtures.baseline(), null);
        Calibration derived = e.budget().calibration();
        double max = derived.observedExpected().max();
        // the fixture's baseline (1,210 positives in 12 weeks, weekly windows) with the whole budget for
        // calibration: a band of its own, not the fallback 1.25
        assertTrue(max > 1 && max != 1.25, derived.toString());
        assertEquals("-", state(e, w(0, Fixtures.calibration(max + 0.1, max, max + 0.2, 1.0, 0.1, 0.5))));
        AlertEngine again = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null,
                new Calibration(null, null, null, null, null, null, null), null), Fixtures.baseline(), null);
        Alert a = again.onFinalEstimate(w(0, Fixtures.calibration(max + 0.1, max + 1e-9, max + 0.2, 1.0, 0.1, 0.5)))
                .get(0);
        assertEquals(max, a.limit(), "raised against the derived end");
    }

    @Test
    void observedExpectedIntervalWhollyOutsideTheBand() {
        // default band [0.8, 1.25]
        assertEquals("ra", state(engine(), w(0, Fixtures.calibration(1.5, 1.25 + 1e-9, 1.8, 1.0, 0.1, 0.5))));
        assertEquals("-", state(engine(), w(0, Fixtures.calibration(1.5, 1.25, 1.8, 1.0, 0.1, 0.5))));
        assertEquals("ra", state(engine(), w(0, Fixtures.calibration(0.6, 0.5, 0.8 - 1e-9, 1.0, 0.1, 0.5))));
        assertEquals("-", state(engine(), w(0, Fixtures.calibration(0.6, 0.5, 0.8, 1.0, 0.1, 0.5))));
        Alert a = engine().onFinalEstimate(w(0, Fixtures.calibration(0.6, 0.5, 0.7, 1.0, 0.1, 0.5))).get(0);
        assertEquals(0.6, a.observed());
        assertEquals(0.8, a.limit());
        assertEquals(1.0, a.baseline());
        assertEquals(0.7, a.evidence().upper());
    }

    @Test
    void slopeWaldIntervalWhollyOutsideItsBand() {
        // default band [0.7, 1.3], z 1.96: slope 1.6 with se 0.15 -> lower 1.306 > 1.3
        assertEquals("ra", state(engine(), w(0, Fixtures.calibration(1.0, 0.9, 1.1, 1.6, 0.15, 0.5))));
        assertEquals("-", state(engine(), w(0, Fixtures.calibration(1.0, 0.9, 1.1, 1.6, 0.16, 0.5))));
        // 0.3 + 1.96 * 0.2 = 0.692 < 0.7
        Alert a = engine().onFinalEstimate(w(0, Fixtures.calibration(1.0, 0.9, 1.1, 0.3, 0.2, 0.5))).get(0);
        assertEquals(0.3, a.observed());
        assertEquals(0.7, a.limit());
        assertEquals(0.3 + 1.96 * 0.2, a.evidence().upper(), 1e-12);
    }

    @Test
    void hosmerLemeshowBelowItsLimit() {
        // default limit 1e-4
        assertEquals("ra", state(engine(), w(0, Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 0.000099))));
        // the limit is exclusive; 1.000001e-4 stays clear of the round trip through the chi-square quantile
        assertEquals("-", state(engine(), w(0, Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 0.0001000001))));
        Alert a = engine().onFinalEstimate(w(0, Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 0.00001))).get(0);
        assertEquals(0.00001, a.observed(), 1e-11);
        assertNull(a.baseline());
    }

    @Test
    void hosmerLemeshowOfAFrozenModelUsesGDegreesOfFreedom() {
        // Source: chi-square tail probabilities, R 4.x pchisq(27, 8, lower.tail = FALSE) = 0.000707 and
        // pchisq(27, 10, lower.tail = FALSE) = 0.002604; pchisq(31, 10, lower.tail = FALSE) = 0.000587.
        CalibrationEstimate at27 = hl(27.0);
        assertEquals(0.002604, CalibrationRule.externalP(at27, 0), 1e-6);
        CalibrationEstimate at31 = hl(31.0);
        assertEquals(0.000587, CalibrationRule.externalP(at31, 0), 1e-6);
        // without the statistic the estimate's own p-value is used
        CalibrationEstimate noStat = new CalibrationEstimate(2000, 100, 100.0, 1.0, 0.9, 1.1, 0.0, 0.1, 1.0, 0.1, null,
                null, 0.0005, 0.04, 0.7);
        assertEquals(0.0005, CalibrationRule.externalP(noStat, 24000));
    }

    @Test
    void hosmerLemeshowAllowsForTheBaselinesError() {
        // Source: R 4.2.2 pchisq(27 / (1 + 2000 / 24000), 10, lower.tail = FALSE) = 0.005493234,
        // pchisq(31 / (1 + 2000 / 24000), 10, lower.tail = FALSE) = 0.001437702 and
        // qchisq(1 - 1e-4, 10) * (1 + 2000 / 24000) = 38.52768 (the statistic at which a window of 2,000
        // events against the fixture's baseline of 24,000 reaches p = 1e-4).
        CalibrationEstimate at27 = hl(27.0);
        assertEquals(0.005493234, CalibrationRule.externalP(at27, 24000), 1e-8);
        CalibrationEstimate at31 = hl(31.0);
        assertEquals(0.001437702, CalibrationRule.externalP(at31, 24000), 1e-8);
        // through the engine (baseline of 24,000 events, default limit 1e-4): raised just above the
        // divided critical value, not just below it; without the divisor both would raise
        assertEquals("ra", state(engine(), w(0, hl(38.53))));
        assertEquals("-", state(engine(), w(0, hl(38.52))));
        assertEquals(1e-4, CalibrationRule.externalP(hl(38.52768177), 24000), 1e-10);
        // with 31 and a limit of 0.001: the classic p (0.000587) would raise, the divided one does not
        Calibration limit001 = new Calibration(new Band(0.8, 1.25), new Band(0.7, 1.3), null, 0.001, null, null, null);
        AlertEngine e31 = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null, limit001, null),
                Fixtures.baseline(), null);
        assertEquals("-", state(e31, w(0, at31)));
    }

    /** A calibration over 10 groups with this Hosmer–Lemeshow statistic, 2,000 events, fine otherwise. */
    private static CalibrationEstimate hl(double statistic) {
        return new CalibrationEstimate(2000, 100, 100.0, 1.0, 0.9, 1.1, 0.0, 0.1, 1.0, 0.1, statistic, 10, 0.5, 0.04, 0.7);
    }

    @Test
    void clearsWhenPointsAreInsideAndHlIsWellAboveItsLimit() {
        AlertEngine e = engine();
        assertEquals("ra", state(e, w(0, Fixtures.calibration(1.5, 1.3, 1.7, 1.0, 0.1, 0.5))));
        // O/E point 1.3 outside band, interval touching: between
        assertEquals("-", state(e, w(1, Fixtures.calibration(1.3, 1.1, 1.5, 1.0, 0.1, 0.5))));
        assertEquals("-", state(e, w(2, fine())));
        // HL p 0.0005 < 10 x 0.0001: not yet inside
        assertEquals("-", state(e, w(3, Fixtures.calibration(1.0, 0.82, 1.2, 1.0, 0.1, 0.0005))));
        assertEquals("-", state(e, w(4, fine())));
        assertEquals("cl", state(e, w(5, fine())));
    }

    @Test
    void customBandsAndGuard() {
        Calibration c = new Calibration(new Band(0.9, 1.25), new Band(0.7, 1.1), null, 0.01, 2, 1, null);
        AlertEngine e = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null, c, null),
                Fixtures.baseline(), null);
        CalibrationEstimate low = Fixtures.calibration(0.8, 0.7, 0.89, 1.0, 0.1, 0.5);
        assertEquals("-", state(e, w(0, low)));
        assertEquals("ra", state(e, w(1, low)));
        assertEquals("cl", state(e, w(2, fine())));
        // no calibration estimate, or too few events: nothing
        assertEquals("-", state(engine(), w(0, null)));
        CalibrationEstimate few = new CalibrationEstimate(99, 99, 50.0, 1.98, 1.6, 2.4, 0.0, 0.1, 1.0, 0.1, 3.0, 10,
                0.9, 0.05, 0.7);
        assertEquals("-", state(engine(), w(0, few)));
    }
}
