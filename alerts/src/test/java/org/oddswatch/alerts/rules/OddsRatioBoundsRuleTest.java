package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioBounds;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermBounds;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.WindowEstimate;

class OddsRatioBoundsRuleTest {

    private static final double Z = 1.959964;

    /** Bounds 1.2 (below) and 4.0 (above); no baseline needed. */
    private static AlertEngine engine(Integer k, Integer m) {
        OddsRatioBounds b = new OddsRatioBounds(List.of(new TermBounds("household_contact", null, 4.0, 1.2)), k, m, null);
        return new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, b, null, null), null, null);
    }

    /** A window whose odds-ratio interval starts at {@code lower} (se 0.1). */
    private static WindowEstimate withLower(int week, double lower) {
        return Fixtures.window(week, Math.log(lower) + Z * 0.1, 0.1);
    }

    private static WindowEstimate withUpper(int week, double upper) {
        return Fixtures.window(week, Math.log(upper) - Z * 0.1, 0.1);
    }

    private static String state(AlertEngine e, WindowEstimate w) {
        List<Alert> a = e.onFinalEstimate(w);
        return a.isEmpty() ? "-" : a.get(0).state().toString().substring(0, 2);
    }

    @Test
    void wholeIntervalMustLieBeyondABound() {
        assertEquals("ra", state(engine(null, null), withLower(0, 4.0 + 1e-6)));
        assertEquals("-", state(engine(null, null), withLower(0, 4.0 - 1e-6)));
        assertEquals("ra", state(engine(null, null), withUpper(0, 1.2 - 1e-6)));
        assertEquals("-", state(engine(null, null), withUpper(0, 1.2 + 1e-6)));
    }

    @Test
    void reportsTheCrossedBoundAndTheInterval() {
        Alert a = engine(null, null).onFinalEstimate(withUpper(0, 1.0)).get(0);
        assertEquals(OddsRatioBoundsRule.NAME, a.rule());
        assertEquals(1.2, a.limit());
        assertEquals(1.0, a.evidence().upper(), 1e-9);
        assertNull(a.baseline());
        assertEquals(2010, a.events() + 10, "fit events (2000) are reported");
    }

    @Test
    void clearsWhenThePointIsBackWithinTheBoundsForMWindows() {
        AlertEngine e = engine(2, 2);
        assertEquals("-", state(e, withLower(0, 4.5)));
        assertEquals("ra", state(e, withLower(1, 4.5)));
        // point estimate above 4 but interval touching 4: hysteresis band
        assertEquals("-", state(e, Fixtures.window(2, Math.log(4.2), 0.1)));
        assertEquals("-", state(e, Fixtures.window(3, Math.log(3.9), 0.1)));
        assertEquals("-", state(e, Fixtures.window(4, Math.log(4.1), 0.1)));
        assertEquals("-", state(e, Fixtures.window(5, Math.log(2.0), 0.1)));
        assertEquals("cl", state(e, Fixtures.window(6, Math.log(2.0), 0.1)));
    }

    @Test
    void guardApplies() {
        WindowEstimate w = withLower(0, 5.0);
        WindowEstimate refused = Fixtures.window(0, w.coefficient("household_contact", "yes").coef(), 0.1,
                Fixtures.fit(FitState.RANK_DEFICIENT, FitMethod.NEWTON, 2000), null);
        assertEquals("-", state(engine(null, null), refused));
        WindowEstimate few = Fixtures.window(0, w.coefficient("household_contact", "yes").coef(), 0.1,
                Fixtures.fit(FitState.CONVERGED, FitMethod.NEWTON, 99), null);
        assertEquals("-", state(engine(null, null), few));
    }
}
