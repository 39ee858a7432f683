package org.oddswatch.estimator.fit;

/**
 * Iteration settings of the Newton and Firth fitters.
 *
 * <p>Convergence needs both: the relative change of the (penalized) log-likelihood between two
 * accepted iterations, {@code |l_k - l_{k-1}| / (|l_k| + 0.1)}, below {@code tolerance}; and every
 * free coordinate's score in standard-error units, {@code |U_j| / sqrt(I_jj)}, below
 * {@link #SCORE_TOLERANCE}.
 *
 * @param maxIterations iteration cap (accepted Newton steps), at least 1
 * @param tolerance relative log-likelihood change, default 1e-10
 */
public record FitControl(int maxIterations, double tolerance) {

    /** Largest accepted score in standard-error units, {@code |U_j| / sqrt(I_jj)}. */
    public static final double SCORE_TOLERANCE = 1e-6;

    public FitControl {
        if (maxIterations < 1) {
            throw new IllegalArgumentException("maxIterations must be at least 1");
        }
        if (!(tolerance > 0)) {
            throw new IllegalArgumentException("tolerance must be positive");
        }
    }

    /** 25 iterations, tolerance 1e-10. */
    public static FitControl defaults() {
        return new FitControl(25, 1e-10);
    }

    public FitControl withMaxIterations(int value) {
        return new FitControl(value, tolerance);
    }
}
