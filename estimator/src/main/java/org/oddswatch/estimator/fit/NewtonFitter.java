package org.oddswatch.estimator.fit;

/**
 * Maximum-likelihood logistic regression on grouped binomial rows by Newton–Raphson (equivalently
 * IRLS with the canonical logit link): step {@code I(beta)^-1 U(beta)} with
 * {@code U = X'(y - n mu)}, {@code I = X' diag(n mu (1 - mu)) X}, step-halving when the
 * log-likelihood would decrease, convergence per {@link FitControl}, one polishing step after
 * convergence, and a cold-start retry when a warm start does not converge. Aliased columns are
 * dropped first ({@link RankCheck}) and reported in {@link FitResult#dropped()}.
 *
 * <p>Under complete or quasi-complete separation the maximum does not exist: the iteration either
 * hits the cap or stops with some linear predictors very large; see {@link SeparationCheck}.
 */
public final class NewtonFitter {

    private NewtonFitter() {
    }

    /**
     * @param start warm-start coefficients (one per column), or null for a cold start
     *     ({@code logit} of the overall proportion for an all-ones first column, 0 elsewhere)
     * @throws IllegalArgumentException when the start vector has the wrong length, or every column
     *     is aliased or empty
     */
    public static FitResult fit(FitProblem problem, double[] start, FitControl control) {
        return FitDriver.fit(problem, start, control, false);
    }
}
