package org.oddswatch.ingest.definition;

import org.oddswatch.estimator.EstimatorOptions;

/**
 * The {@code estimates} section.
 *
 * @param level confidence level of every interval (default 0.95)
 * @param prevalenceInterval {@code wilson} (default), {@code clopper-pearson} or {@code jeffreys}
 * @param stratifyBy name of a categorical term to break prevalence down by, or null
 * @param minEventsPerParameter default 10
 * @param sensitivity test sensitivity for the Rogan–Gladen adjustment, or null
 * @param specificity test specificity, or null
 * @param patternLimit distinct covariate patterns per bucket before rows are kept one by one (default 4096)
 * @param profileIntervals profile-likelihood intervals and LR tests for watched terms (default true)
 */
public record EstimateSpec(double level, String prevalenceInterval, String stratifyBy, double minEventsPerParameter,
                           Double sensitivity, Double specificity, int patternLimit, boolean profileIntervals) {

    public EstimatorOptions options() {
        EstimatorOptions options = EstimatorOptions.defaults()
                .withLevel(level)
                .withPrevalenceInterval(prevalenceInterval)
                .withStratifyBy(stratifyBy)
                .withMinEventsPerParameter(minEventsPerParameter)
                .withProfileIntervals(profileIntervals);
        return sensitivity == null ? options : options.withTestAccuracy(sensitivity, specificity);
    }
}
