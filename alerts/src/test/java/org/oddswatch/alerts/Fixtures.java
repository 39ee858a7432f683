package org.oddswatch.alerts;

import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.distribution.ChiSquaredDistribution;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.FitSummary;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.terms.Column;

/**
 * Hand-built estimates and baselines for rule tests (house scenario: respiratory testing, exposure
 * household contact). Weekly windows starting 2026-04-06 (after the baseline period).
 */
public final class Fixtures {

    public static final String STREAM = "respiratory-north";
    public static final Instant FIRST_WINDOW = Instant.parse("2026-04-06T00:00:00Z");
    public static final Duration WEEK = Duration.ofDays(7);

    private Fixtures() {
    }

    public static List<Column> columns() {
        return List.of(Column.intercept(), new Column("household_contact", "yes", "no", null, true, true),
                new Column("age_years", null, null, 10.0, false, false));
    }

    /**
     * The rule set that earlier versions ran by default: the window z-rule on every watched term,
     * calibration with the fixed bands O/E [0.8, 1.25] and slope [0.7, 1.3], both CUSUMs with their
     * limits from the budget. Tests of messages, meters and reports use it for its drift alerts; the
     * defaults now leave the z-rule off and derive the calibration bands (AlertRulesConfigTest).
     */
    public static org.oddswatch.alerts.engine.AlertRulesConfig earlierDefaults() {
        return new org.oddswatch.alerts.engine.AlertRulesConfig(null,
                new org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioDrift(null, null, null, null, null, null), null,
                new org.oddswatch.alerts.engine.AlertRulesConfig.Calibration(
                        new org.oddswatch.alerts.engine.AlertRulesConfig.Band(0.8, 1.25),
                        new org.oddswatch.alerts.engine.AlertRulesConfig.Band(0.7, 1.3), null, null, null, null, null),
                org.oddswatch.alerts.engine.AlertRulesConfig.defaults().cusum(),
                org.oddswatch.alerts.engine.AlertRulesConfig.defaults().oddsRatioCusum(), null, null);
    }

    /** Baseline: intercept -3.0 (se 0.05), household_contact 0.7 (se 0.08), age 0.1 (se 0.02). */
    public static BaselineModel baseline() {
        double[][] cov = {{0.0025, 0, 0}, {0, 0.0064, 0}, {0, 0, 0.0004}};
        return new BaselineModel(columns(), new double[] {-3.0, 0.7, 0.1}, cov, "2026-01-05T00:00:00Z",
                "2026-03-30T00:00:00Z", 24000, 1210, "sha256:test");
    }

    public static Instant start(int week) {
        return FIRST_WINDOW.plus(WEEK.multipliedBy(week));
    }

    public static FitSummary fit(FitState state, FitMethod method, long events) {
        return new FitSummary(state, method, events, 3, true, -400.0, -420.0, List.of());
    }

    /** A final window whose household_contact coefficient is {@code coef} with standard error {@code se}. */
    public static WindowEstimate window(int week, double coef, double se) {
        return window(week, coef, se, fit(FitState.CONVERGED, FitMethod.NEWTON, 2000), null);
    }

    public static WindowEstimate window(int week, double coef, double se, FitSummary fit, CalibrationEstimate cal) {
        List<CoefficientEstimate> coefs = new ArrayList<>();
        coefs.add(new CoefficientEstimate("intercept", null, null, null, -3.0, 0.1, -30.0, 0.0, null, null, null,
                "wald", null, null, null, null, null));
        coefs.add(new CoefficientEstimate("household_contact", "yes", "no", null, coef, se, coef / se, 0.001,
                Math.exp(coef), Math.exp(coef - 1.959964 * se), Math.exp(coef + 1.959964 * se), "wald",
                null, null, 12.0, 1, 0.001));
        coefs.add(new CoefficientEstimate("age_years", null, null, 10.0, 0.1, 0.03, 3.3, 0.001, Math.exp(0.1),
                Math.exp(0.1 - 0.0588), Math.exp(0.1 + 0.0588), "wald", null, null, null, null, null));
        return new WindowEstimate(STREAM, start(week), start(week).plus(WEEK), WindowStatus.FINAL, 2010, 101,
                new PrevalenceEstimate(101 / 2010.0, 0.0415, 0.0607, "wilson", null), List.of(), fit, coefs, cal,
                List.of());
    }

    /**
     * A final window with no figures (no fit, no calibration): the window rules find nothing to judge
     * in it, the CUSUM reports the events before its end.
     */
    public static WindowEstimate bareWindow(Instant start, Instant end) {
        return new WindowEstimate(STREAM, start, end, WindowStatus.FINAL, 0, 0, null, List.of(), null, List.of(), null,
                List.of());
    }

    /**
     * A window whose household_contact drift z against {@link #baseline()} is exactly {@code z}
     * (with se_now = 0.15).
     */
    public static WindowEstimate windowWithZ(int week, double z) {
        double se = 0.15;
        double coef = 0.7 + z * Math.sqrt(se * se + 0.0064);
        return window(week, coef, se);
    }

    /**
     * A calibration estimate over 10 risk groups whose Hosmer–Lemeshow statistic has the tail
     * probability {@code hlP} as the rule takes it against {@link #baseline()} (10 degrees of freedom,
     * allowing for the baseline's error); the
     * estimate's own p-value is the 8-degree one.
     */
    public static CalibrationEstimate calibration(double oe, double oeLower, double oeUpper, double slope,
                                                  double slopeSe, double hlP) {
        // the statistic whose p-value, as the rule takes it against baseline() (10 degrees of freedom,
        // divided by 1 + 2,000 / 24,000 for the baseline's error), is hlP
        double statistic = new ChiSquaredDistribution(null, 10).inverseCumulativeProbability(1 - hlP)
                * (1 + 2000.0 / baseline().events());
        double ownP = 1 - new ChiSquaredDistribution(null, 8).cumulativeProbability(statistic);
        return new CalibrationEstimate(2000, Math.round(100 * oe), 100.0, oe, oeLower, oeUpper, 0.0, 0.1, slope,
                slopeSe, statistic, 10, ownP, 0.04, 0.7);
    }
}
