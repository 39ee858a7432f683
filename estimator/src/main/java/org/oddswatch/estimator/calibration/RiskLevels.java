package org.oddswatch.estimator.calibration;

import java.util.Arrays;

/**
 * The distinct baseline risk levels of a window in ascending order, with the positives, negatives
 * and expected positives ({@code sum n_i p_i}) at each: the individual-level risk distribution, held
 * in O(patterns) space and built in O(patterns log patterns) time (a primitive sort and a binary search per row).
 *
 * <p><b>Ties.</b> Two risks are tied when their linear predictors differ by at most
 * {@link #TIE_TOLERANCE} on the log-odds scale (odds within a factor {@code 1 + 1e-9}). The sorted
 * linear predictors are cut into levels from the lowest up: a level starts at its lowest value
 * {@code a} and holds every value up to {@code a + 1e-9}. Risks that are equal in exact arithmetic but
 * were summed in another order ({@code -2 + 0.6 + 0.1} against {@code -2 + 0.7}) differ only by
 * rounding, about {@code 1e-16 sum_j |x_j b_j|}, far below the tolerance; the reference script
 * (calibration.R) groups the same way, so the Hosmer–Lemeshow groups and the c-statistic's ranks do
 * not depend on the order in which a library sums {@code x . beta}. Distinct risks closer than the
 * tolerance count as one level, which changes no statistic by more than about 1e-9.
 */
final class RiskLevels {

    /** Largest difference of linear predictors (log-odds) between two risks counted as tied. */
    static final double TIE_TOLERANCE = 1e-9;

    final double[] positives;
    final double[] negatives;
    final double[] expected;

    private RiskLevels(double[] positives, double[] negatives, double[] expected) {
        this.positives = positives;
        this.negatives = negatives;
        this.expected = expected;
    }

    static RiskLevels of(ScoredRows rows) {
        int n = rows.eta.length;
        double[] sorted = new double[n];
        int m = 0;
        for (int i = 0; i < n; i++) {
            if (rows.trialsPerRow[i] > 0) {
                sorted[m++] = rows.eta[i];
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
        double[] eta = Arrays.copyOf(sorted, distinct);
        int[] levelOf = new int[distinct];
        int levels = 0;
        double start = Double.NEGATIVE_INFINITY;
        for (int k = 0; k < distinct; k++) {
            if (levels == 0 || eta[k] > start + TIE_TOLERANCE) {
                start = eta[k];
                levels++;
            }
            levelOf[k] = levels - 1;
        }
        double[] positives = new double[levels];
        double[] negatives = new double[levels];
        double[] expected = new double[levels];
        for (int i = 0; i < n; i++) {
            double t = rows.trialsPerRow[i];
            if (t > 0) {
                int k = levelOf[Arrays.binarySearch(eta, rows.eta[i])];
                positives[k] += rows.positivesPerRow[i];
                negatives[k] += t - rows.positivesPerRow[i];
                expected[k] += t * rows.risk[i];
            }
        }
        return new RiskLevels(positives, negatives, expected);
    }

    int count() {
        return positives.length;
    }

    /**
     * The c-statistic: concordant (positive, negative) pairs, plus one half per tied pair, over all
     * pairs. Requires at least one positive and one negative.
     */
    double concordance() {
        double negativesBelow = 0;
        double concordant = 0;
        double totalPositives = 0;
        for (int k = 0; k < positives.length; k++) {
            concordant += positives[k] * (negativesBelow + 0.5 * negatives[k]);
            negativesBelow += negatives[k];
            totalPositives += positives[k];
        }
        return concordant / (totalPositives * negativesBelow);
    }
}
