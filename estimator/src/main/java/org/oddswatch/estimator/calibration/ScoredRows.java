package org.oddswatch.estimator.calibration;

import org.oddswatch.estimator.window.WindowData;

/**
 * A window's grouped rows scored by a baseline: linear predictor and risk per row, and the sums the
 * calibration statistics need. Rows with no trials keep a linear predictor (the fits need one per
 * row) but add nothing to any sum.
 */
final class ScoredRows {

    final double[] eta;
    final double[] risk;
    final double[] trialsPerRow;
    final double[] positivesPerRow;
    final double trials;
    final double positives;
    final double expected;
    final double brierSum;
    private final double minEtaPositive;
    private final double maxEtaPositive;
    private final double minEtaNegative;
    private final double maxEtaNegative;

    private ScoredRows(double[] eta, double[] risk, WindowData data) {
        this.eta = eta;
        this.risk = risk;
        this.trialsPerRow = data.trials();
        this.positivesPerRow = data.positives();
        double n = 0;
        double y = 0;
        double e = 0;
        double brier = 0;
        double minPos = Double.POSITIVE_INFINITY;
        double maxPos = Double.NEGATIVE_INFINITY;
        double minNeg = Double.POSITIVE_INFINITY;
        double maxNeg = Double.NEGATIVE_INFINITY;
        for (int i = 0; i < eta.length; i++) {
            double t = trialsPerRow[i];
            double pos = positivesPerRow[i];
            double neg = t - pos;
            double p = risk[i];
            n += t;
            y += pos;
            e += t * p;
            brier += pos * (1 - p) * (1 - p) + neg * p * p;
            if (pos > 0) {
                minPos = Math.min(minPos, eta[i]);
                maxPos = Math.max(maxPos, eta[i]);
            }
            if (neg > 0) {
                minNeg = Math.min(minNeg, eta[i]);
                maxNeg = Math.max(maxNeg, eta[i]);
            }
        }
        this.trials = n;
        this.positives = y;
        this.expected = e;
        this.brierSum = brier;
        this.minEtaPositive = minPos;
        this.maxEtaPositive = maxPos;
        this.minEtaNegative = minNeg;
        this.maxEtaNegative = maxNeg;
    }

    static ScoredRows score(WindowData data, double[] beta) {
        int n = data.rows();
        int p = data.columns();
        double[] x = data.x();
        double[] eta = new double[n];
        double[] risk = new double[n];
        for (int i = 0; i < n; i++) {
            double s = 0;
            int base = i * p;
            for (int j = 0; j < p; j++) {
                s += x[base + j] * beta[j];
            }
            eta[i] = s;
            risk[i] = logistic(s);
        }
        return new ScoredRows(eta, risk, data);
    }

    /**
     * Whether the linear predictor separates the outcomes (completely or quasi-completely): every
     * positive at or above every negative, or every positive at or below every negative. In one
     * dimension with an intercept this is exactly when the slope's maximum-likelihood estimate does
     * not exist (Albert &amp; Anderson 1984). Assumes both outcomes occur.
     */
    boolean separates() {
        return maxEtaNegative <= minEtaPositive || maxEtaPositive <= minEtaNegative;
    }

    /** {@code 1 / (1 + exp(-eta))} without overflow. */
    static double logistic(double eta) {
        if (eta >= 0) {
            return 1.0 / (1.0 + Math.exp(-eta));
        }
        double e = Math.exp(eta);
        return e / (1.0 + e);
    }
}
