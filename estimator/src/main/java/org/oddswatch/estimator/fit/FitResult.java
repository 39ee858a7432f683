package org.oddswatch.estimator.fit;

/**
 * The outcome of one Newton or Firth fit. Arrays span all columns of the problem as given; a
 * dropped (aliased) column has coefficient 0 and a zero row and column in the covariance.
 *
 * @param coefficients estimates, one per column
 * @param covariance inverse information matrix at the estimates (Cholesky, Commons Math), or null
 *     when the information matrix is not positive definite
 * @param logLikelihood binomial log-likelihood at the estimates, {@code sum y*eta - n*log(1+e^eta)}
 *     (the binomial coefficients, constant in beta, are left out)
 * @param penalizedLogLikelihood for Firth fits {@code logLikelihood + 0.5 log det I}; equal to
 *     {@code logLikelihood} for Newton fits
 * @param iterations accepted Newton steps until the iteration stopped (the polishing step that
 *     follows convergence is not counted)
 * @param stop why the iteration stopped, and the Newton decrement there
 * @param warmStartUsed whether the reported fit started from the caller's start vector
 * @param method Newton (maximum likelihood) or Firth (penalized)
 * @param dropped indices of aliased columns left out of the fit, ascending
 * @param maxAbsScore largest free-coordinate score in standard-error units at the estimates
 * @param maxAbsLinearPredictor largest |eta| over rows with trials (a divergence symptom when large)
 * @param trace objective (log-likelihood, or penalized for Firth) at the start and after each
 *     accepted iteration, for tests and diagnostics
 * @param score gradient of the objective at the estimates, one per column (Firth: the modified
 *     score); on held-fixed coordinates this is the slope of the profile
 */
public record FitResult(double[] coefficients, double[][] covariance, double logLikelihood,
                        double penalizedLogLikelihood, int iterations, FitStop stop, boolean warmStartUsed,
                        FitMethod method, int[] dropped, double maxAbsScore, double maxAbsLinearPredictor,
                        double[] trace, double[] score) {

    /** Whether the iteration met a convergence rule ({@link FitStop#converged()}). */
    public boolean converged() {
        return stop.converged();
    }

    /** The stop rule as a sentence with the real iteration count, for notes users see. */
    public String stopDescription() {
        return stop.describe(iterations, method == FitMethod.FIRTH);
    }

    /** Standard error of column j, or NaN when the covariance is absent or the column was dropped. */
    public double standardError(int j) {
        if (covariance == null || isDropped(j)) {
            return Double.NaN;
        }
        double v = covariance[j][j];
        return v > 0 ? Math.sqrt(v) : Double.NaN;
    }

    /** Whether column j was dropped as aliased. */
    public boolean isDropped(int j) {
        for (int d : dropped) {
            if (d == j) {
                return true;
            }
        }
        return false;
    }

    /** The maximised objective: penalized log-likelihood for Firth, log-likelihood otherwise. */
    public double objective() {
        return penalizedLogLikelihood;
    }
}
