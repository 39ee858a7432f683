/**
 * Prevalence and simple table statistics: binomial intervals (Wilson, Clopper–Pearson, Jeffreys),
 * Rogan–Gladen adjustment for test accuracy, the odds ratio of one 2x2 table with its Woolf
 * interval, and the Mantel–Haenszel common odds ratio over strata. Everything here is pure and
 * deterministic; a value that cannot be computed is null, never NaN or infinity.
 *
 * <p>{@link org.oddswatch.estimator.prevalence.Prevalence} is the entry point the window estimator
 * uses.
 */
package org.oddswatch.estimator.prevalence;
