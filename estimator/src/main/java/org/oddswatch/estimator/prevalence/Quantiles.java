package org.oddswatch.estimator.prevalence;

import org.apache.commons.math3.distribution.BetaDistribution;
import org.apache.commons.math3.special.Erf;

/**
 * Quantiles the intervals need, via Commons Math. No random generator is created: the distributions
 * are built with a null generator because only their quantile functions are used.
 */
final class Quantiles {

    /** Absolute accuracy asked of the beta quantile search (Commons Math's default is 1e-9). */
    static final double BETA_ACCURACY = 1e-14;

    private Quantiles() {
    }

    /** Checks that a confidence level lies strictly between 0 and 1. */
    static double checkLevel(double level) {
        if (!(level > 0 && level < 1)) {
            throw new IllegalArgumentException("confidence level must lie strictly between 0 and 1, got " + level);
        }
        return level;
    }

    /** The standard normal quantile z with P(|Z| &lt;= z) = level (1.959964 for 0.95). */
    static double twoSidedNormal(double level) {
        double p = 1 - (1 - checkLevel(level)) / 2;
        return Math.sqrt(2) * Erf.erfInv(2 * p - 1);
    }

    /** The {@code p} quantile of beta(a, b), a and b &gt; 0. */
    static double beta(double p, double a, double b) {
        return new BetaDistribution(null, a, b, BETA_ACCURACY).inverseCumulativeProbability(p);
    }

    /** {@code value} when finite, else null. */
    static Double finiteOrNull(double value) {
        return Double.isFinite(value) ? value : null;
    }
}
