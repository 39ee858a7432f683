package org.oddswatch.estimator.result;

/**
 * Rogan–Gladen true prevalence {@code (p + Sp - 1) / (Se + Sp - 1)} with its interval (the apparent
 * prevalence's interval bounds mapped through the same formula), clipped to [0, 1].
 *
 * @param clipped true when the point estimate or a bound had to be clipped (a note says so)
 */
public record AdjustedPrevalence(Double value, Double lower, Double upper, double sensitivity, double specificity,
                                 boolean clipped) {
}
