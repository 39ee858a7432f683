package org.oddswatch.ingest.definition;

import org.oddswatch.estimator.EstimatorOptions;

/**
 * The {@code estimates} section; {@code stratifyBy}, {@code sensitivity} and {@code specificity}
 * are null when not given.
 */
public record EstimateSpec(double level, String prevalenceInterval, String stratifyBy, double minEventsPerParameter,
                           Double sensitivity, Double specificity, int patternLimit, boolean profileIntervals) {

    public EstimatorOptions options() {
        EstimatorOptions options = EstimatorOptions.defaults().withLevel(level)
                .withPrevalenceInterval(prevalenceInterval).withStratifyBy(stratifyBy)
                .withMinEventsPerParameter(minEventsPerParameter).withProfileIntervals(profileIntervals);
        return sensitivity == null ? options : options.withTestAccuracy(sensitivity, specificity);
    }
}
