package org.oddswatch.estimator.fit;

/**
 * A window model's fit after rank and separation checks: which columns were kept, the accepted fit
 * on the kept columns, and the fit state before the events-per-parameter check.
 *
 * @param state {@code CONVERGED}, {@code SEPARATION}, {@code RANK_DEFICIENT} or {@code NOT_CONVERGED}
 * @param work the problem restricted to the kept columns
 * @param keep kept column indices of the original problem, ascending
 * @param dropped aliased column indices, ascending
 * @param fit the accepted fit over the kept columns (Firth under separation)
 * @param separating original column indices involved in the separating direction (may be empty when
 *     separation was decided by the heuristic)
 * @param separationByHeuristic whether separation was decided without the linear programme
 */
public record ModelFit(FitState state, FitProblem work, int[] keep, int[] dropped, FitResult fit, int[] separating,
                       boolean separationByHeuristic) {

    /** The fitted method. */
    public FitMethod method() {
        return fit.method();
    }

    /** Coefficients over the original columns, 0 for dropped ones. */
    public double[] fullCoefficients(int p) {
        double[] beta = new double[p];
        for (int a = 0; a < keep.length; a++) {
            beta[keep[a]] = fit.coefficients()[a];
        }
        return beta;
    }

    /** Position of original column j among the kept columns, or -1 when dropped. */
    public int keptIndex(int j) {
        for (int a = 0; a < keep.length; a++) {
            if (keep[a] == j) {
                return a;
            }
        }
        return -1;
    }
}
