package org.oddswatch.estimator.result;

/**
 * Share of positives with a binomial interval.
 *
 * @param value cases / events, or null for an empty window
 * @param lower lower interval bound
 * @param upper upper interval bound
 * @param method interval method label: {@code wilson}, {@code clopper-pearson} or {@code jeffreys}
 * @param adjusted the Rogan–Gladen true-prevalence estimate when test accuracy is configured, else null
 */
public record PrevalenceEstimate(Double value, Double lower, Double upper, String method, AdjustedPrevalence adjusted) {
}
