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
        double[] start = profileTraceStart(fit, columns);
        for (int j : columns) {
            fixed[j] = true;
            start[j] = 0;
        }
        boolean penalized = fit.method() == FitMethod.FIRTH;
        FitResult restricted;
        if (columns.length == problem.columns()) {
            restricted = atStart(problem, start, penalized);
        } else {
            restricted = FitDriver.fitFullRank(problem, start, fixed, control.forObjectiveOnly(), penalized);
        }
        double chi2 = Math.max(0, 2 * (fit.objective() - restricted.objective()));
        double p = Gamma.regularizedGammaQ(columns.length / 2.0, chi2 / 2);
        return new LikelihoodRatioTest(chi2, columns.length, p, restricted.converged());
    }

    /**
     * The restricted fit's start: the other coefficients moved to where the quadratic approximation puts
     * the restricted maximum, {@code beta_o - V_oT V_TT^-1 beta_T} (V the covariance at the estimate, T the
     * tested columns); the estimates themselves when V is absent or V_TT is singular.
     */
    static double[] profileTraceStart(FitResult fit, int[] columns) {
        double[] start = fit.coefficients().clone();
        double[][] v = fit.covariance();
        int t = columns.length;
        if (v == null || t == start.length) {
            return start;
        }
        double[] vtt = new double[t * t];
        double[] rhs = new double[t];
        for (int a = 0; a < t; a++) {
            rhs[a] = start[columns[a]];
            for (int b = 0; b < t; b++) {
                vtt[a * t + b] = v[columns[a]][columns[b]];
            }
        }
        if (!DenseCholesky.decompose(vtt, t)) {
            return start;
        }
        DenseCholesky.solve(vtt, t, rhs);
        for (int k = 0; k < start.length; k++) {
            double shift = 0;
            for (int a = 0; a < t; a++) {
                shift += v[k][columns[a]] * rhs[a];
            }
            start[k] -= shift;
        }
        return start;
    }

    private static FitResult atStart(FitProblem problem, double[] start, boolean penalized) {
        boolean[] all = new boolean[problem.columns()];
        java.util.Arrays.fill(all, true);
        return NewtonEngine.run(problem, start, all, penalized, FitControl.defaults(), true);
    }
}
