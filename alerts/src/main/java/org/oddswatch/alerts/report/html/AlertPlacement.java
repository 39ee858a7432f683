package org.oddswatch.alerts.report.html;

import java.util.Locale;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * What an alert measured and on which chart of its stream its marker goes. An alert that carries a
 * {@code measure} is taken at its word (a measure naming the slope goes on the slope chart); otherwise the measure follows from the rule: the odds
 * ratio for the drift and bounds rules, the CUSUM statistic for CUSUM rules, and for the calibration
 * rule whichever of observed/expected, slope and Hosmer–Lemeshow p-value equals the alert's observed
 * value in its window's calibration (the rule reports the first figure beyond its band).
 *
 * @param measure the measure, in words
 * @param chart the key of the chart: {@code or:<term=level>}, {@code oe}, {@code slope} or
 *     {@code cusum:<rule>|<subject>}
 */
record AlertPlacement(String measure, String chart) {

    static final String OBSERVED_EXPECTED = "observed/expected";
    static final String SLOPE = "calibration slope";

    static AlertPlacement of(Alert alert, WindowEstimate window) {
        String declared = declaredMeasure(alert);
        String rule = alert.rule() == null ? "" : alert.rule();
        String subject = alert.subject() == null ? "" : alert.subject().label();
        if (rule.contains("cusum")) {
            return new AlertPlacement(declared != null ? declared : "CUSUM statistic", cusumChart(rule, subject));
        }
        boolean calibration = alert.subject() != null && AlertSubject.CALIBRATION.equals(alert.subject().term());
        if (!calibration) {
            String measure = declared != null ? declared
                    : rule.equals("odds-ratio-drift") ? "odds ratio (limit on |drift z|)" : "odds ratio";
            return new AlertPlacement(measure, "or:" + subject);
        }
        String measure = declared != null ? declared : calibrationMeasure(alert, window);
        boolean slope = measure.toLowerCase(Locale.ROOT).contains("slope");
        return new AlertPlacement(measure, slope ? "slope" : "oe");
    }

    static String cusumChart(String rule, String subject) {
        return "cusum:" + rule + "|" + subject;
    }

    /** The alert's own {@code measure} when it has one. */
    private static String declaredMeasure(Alert alert) {
        return alert.measure() == null || alert.measure().isBlank() ? null : alert.measure();
    }

    /** True for a measure that is a Hosmer–Lemeshow p-value (drawn at the window's O/E, its limit not drawn). */
    static boolean isPValue(String measure) {
        return measure.toLowerCase(Locale.ROOT).contains("hosmer");
    }

    private static String calibrationMeasure(Alert alert, WindowEstimate window) {
        CalibrationEstimate c = window == null ? null : window.calibration();
        Double observed = alert.observed();
        if (c == null || observed == null) {
            return OBSERVED_EXPECTED;
        }
        if (c.slope() != null && !c.slope().equals(c.observedExpected()) && observed.equals(c.slope())) {
            return SLOPE;
        }
        if (observed.equals(c.observedExpected())) {
            return OBSERVED_EXPECTED;
        }
        return "Hosmer–Lemeshow p";
    }
}
