package org.oddswatch.estimator.fit;

import org.apache.commons.math3.special.Gamma;

/**
 * Likelihood-ratio test of a set of columns: {@code chi2 = 2 [l(full) - l(without them)]} on
 * {@code df} = the number of columns, {@code p = Q(df/2, chi2/2)} (upper regularised gamma). For a
 * Firth fit both sides are penalized log-likelihoods and the restricted model keeps the full
 * model's penalty with the columns fixed at 0 (Heinze &amp; Schemper 2002), which for Newton fits is the
 * same as leaving the columns out.
 *
 * @param chiSquare the statistic, at least 0
 * @param df degrees of freedom
 * @param p upper-tail probability
 * @param converged whether the restricted fit converged
 */
public record LikelihoodRatioTest(double chiSquare, int df, double p, boolean converged) {

    /**
     * @param problem a full-rank problem (aliased columns already removed)
     * @param fit its fit
     * @param columns the tested columns
     */
    public static LikelihoodRatioTest of(FitProblem problem, FitResult fit, int[] columns, FitControl control) {
        boolean[] fixed = new boolean[problem.columns()];
        double[] start = fit.coefficients().clone();
        for (int j : columns) {
            fixed[j] = true;
            start[j] = 0;
        }
        boolean penalized = fit.method() == FitMethod.FIRTH;
        FitResult restricted;
        if (columns.length == problem.columns()) {
            restricted = atStart(problem, start, penalized);
        } else {
            restricted = FitDriver.fitFullRank(problem, start, fixed, control, penalized);
        }
        double chi2 = Math.max(0, 2 * (fit.objective() - restricted.objective()));
        double p = Gamma.regularizedGammaQ(columns.length / 2.0, chi2 / 2);
        return new LikelihoodRatioTest(chi2, columns.length, p, restricted.converged());
    }

    private static FitResult atStart(FitProblem problem, double[] start, boolean penalized) {
        boolean[] all = new boolean[problem.columns()];
        java.util.Arrays.fill(all, true);
        return NewtonEngine.run(problem, start, all, penalized, FitControl.defaults(), true);
    }
}
