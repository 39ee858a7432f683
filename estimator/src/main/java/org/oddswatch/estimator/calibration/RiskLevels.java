package org.oddswatch.estimator.calibration;

import java.util.Arrays;

/**
 * The distinct baseline risks of a window in ascending order, with the positives and negatives at
 * each: the individual-level risk distribution, held in O(patterns) space and built in
 * O(patterns log patterns) time (a primitive sort and a binary search per row). Risks are tied when
 * their doubles are equal.
 */
final class RiskLevels {

    final double[] risk;
    final double[] positives;
    final double[] negatives;

    private RiskLevels(double[] risk, double[] positives, double[] negatives) {
        this.risk = risk;
        this.positives = positives;
        this.negatives = negatives;
    }

    static RiskLevels of(ScoredRows rows) {
        int n = rows.risk.length;
        double[] sorted = new double[n];
        int m = 0;
        for (int i = 0; i < n; i++) {
            if (rows.trialsPerRow[i] > 0) {
                sorted[m++] = rows.risk[i];
            }
        }
        sorted = Arrays.copyOf(sorted, m);
        Arrays.sort(sorted);
        int distinct = 0;
        for (int i = 0; i < m; i++) {
            if (i == 0 || sorted[i] != sorted[distinct - 1]) {
                sorted[distinct++] = sorted[i];
            }
        }
        double[] risk = Arrays.copyOf(sorted, distinct);
        double[] positives = new double[distinct];
        double[] negatives = new double[distinct];
        for (int i = 0; i < n; i++) {
            double t = rows.trialsPerRow[i];
            if (t > 0) {
                int k = Arrays.binarySearch(risk, rows.risk[i]);
                positives[k] += rows.positivesPerRow[i];
                negatives[k] += t - rows.positivesPerRow[i];
            }
        }
        return new RiskLevels(risk, positives, negatives);
    }

    int count() {
        return risk.length;
    }

    /**
     * The c-statistic: concordant (positive, negative) pairs, plus one half per tied pair, over all
     * pairs. Requires at least one positive and one negative.
     */
    double concordance() {
        double negativesBelow = 0;
        double concordant = 0;
        double totalPositives = 0;
        for (int k = 0; k < risk.length; k++) {
            concordant += positives[k] * (negativesBelow + 0.5 * negatives[k]);
            negativesBelow += negatives[k];
            totalPositives += positives[k];
        }
        return concordant / (totalPositives * negativesBelow);
    }
}
