package org.oddswatch.estimator.result;

/**
 * One coefficient of a window's model. Fields that cannot be computed are null.
 *
 * @param term term name, {@code intercept} for the constant
 * @param level the indicator's level (binary and categorical terms), else null
 * @param reference the reference level, else null
 * @param per the unit of a numeric term's odds ratio, else null
 * @param coef the log-odds coefficient
 * @param se its standard error, sqrt of the diagonal of the inverse information
 * @param z Wald statistic coef / se
 * @param p two-sided p-value of the Wald z
 * @param oddsRatio exp(coef); null for the intercept
 * @param lower lower bound of the interval on the odds-ratio scale
 * @param upper upper bound
 * @param interval {@code wald}
 * @param profileLower profile-likelihood lower bound (watched terms), else null
 * @param profileUpper profile-likelihood upper bound
 * @param lrChiSquare likelihood-ratio chi-square of the term (model with versus without it); watched terms
 * @param lrDf its degrees of freedom (the term's number of columns)
 * @param lrP its p-value
 */
public record CoefficientEstimate(String term, String level, String reference, Double per, double coef, Double se,
                                  Double z, Double p, Double oddsRatio, Double lower, Double upper, String interval,
                                  Double profileLower, Double profileUpper, Double lrChiSquare, Integer lrDf,
                                  Double lrP) {
}
