package org.oddswatch.estimator.result;

/**
 * Calibration of a frozen baseline model on one window's complete cases.
 *
 * @param events complete-case events scored
 * @param observed observed positives O
 * @param expected expected positives E = sum of baseline risks
 * @param observedExpected O / E
 * @param oeLower lower bound of O / E (Poisson interval on O, divided by E)
 * @param oeUpper upper bound
 * @param intercept calibration intercept: fit of the outcome on an offset of the baseline linear predictor
 * @param interceptSe its standard error
 * @param slope calibration slope: coefficient of the baseline linear predictor
 * @param slopeSe its standard error
 * @param hosmerLemeshow Hosmer–Lemeshow chi-square over risk groups
 * @param hosmerLemeshowGroups number of groups g actually formed
 * @param hosmerLemeshowP p-value with g - 2 degrees of freedom
 * @param brier mean squared difference between outcome and baseline risk
 * @param cStatistic area under the ROC curve of the baseline risk (ties count one half)
 */
public record CalibrationEstimate(long events, long observed, Double expected, Double observedExpected, Double oeLower,
                                  Double oeUpper, Double intercept, Double interceptSe, Double slope, Double slopeSe,
                                  Double hosmerLemeshow, Integer hosmerLemeshowGroups, Double hosmerLemeshowP,
                                  Double brier, Double cStatistic) {
}
