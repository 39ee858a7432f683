package org.oddswatch.estimator.prevalence;

import java.util.List;

/**
 * An odds ratio with a two-sided interval computed on the log scale. Fields that cannot be computed
 * are null.
 *
 * @param oddsRatio the point estimate
 * @param logSe standard error of its logarithm
 * @param lower lower bound, {@code exp(log OR - z·se)}
 * @param upper upper bound, {@code exp(log OR + z·se)}
 * @param level the confidence level
 * @param method {@code woolf} (one table) or {@code mantel-haenszel} (strata)
 * @param corrected true when 0.5 was added to every cell (Haldane) because a cell was zero
 * @param strata tables given (1 for a single table)
 * @param strataUsed tables that carried information and entered the estimate
 * @param notes plain-language notes on special cases
 */
public record OddsRatioEstimate(Double oddsRatio, Double logSe, Double lower, Double upper, double level,
                                String method, boolean corrected, int strata, int strataUsed, List<String> notes) {

    public OddsRatioEstimate {
        notes = List.copyOf(notes);
    }

    /** Whether a point estimate exists. */
    public boolean isDefined() {
        return oddsRatio != null;
    }

    /** The estimate and its log-scale normal interval; null fields for whatever is not finite. */
    static OddsRatioEstimate onLogScale(double logOr, double logSe, double level, String method, boolean corrected,
                                        int strata, int strataUsed, List<String> notes) {
        double z = Quantiles.twoSidedNormal(level);
        Double se = Quantiles.finiteOrNull(logSe);
        Double or = Quantiles.finiteOrNull(Math.exp(logOr));
        Double lo = se == null || or == null ? null : Quantiles.finiteOrNull(Math.exp(logOr - z * logSe));
        Double hi = se == null || or == null ? null : Quantiles.finiteOrNull(Math.exp(logOr + z * logSe));
        return new OddsRatioEstimate(or, se, lo, hi, level, method, corrected, strata, strataUsed, notes);
    }

    /** An estimate with no values, for tables that carry no information. */
    static OddsRatioEstimate undefined(double level, String method, int strata, int strataUsed, List<String> notes) {
        return new OddsRatioEstimate(null, null, null, null, level, method, false, strata, strataUsed, notes);
    }
}
