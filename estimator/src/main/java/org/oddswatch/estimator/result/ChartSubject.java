package org.oddswatch.estimator.result;

/**
 * What a chart value is about: a watched term and level (level null for a numeric term), or the
 * calibration of the baseline model ({@code term = "calibration"}, level null). The JSON shape is
 * the same as an alert's {@code subject}.
 */
public record ChartSubject(String term, String level) {
}
