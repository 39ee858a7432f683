package org.oddswatch.estimator.result;

/** Prevalence within one level of the stratifying categorical term. */
public record StratumPrevalence(String term, String level, long events, long cases, Double value, Double lower,
                                Double upper) {
}
