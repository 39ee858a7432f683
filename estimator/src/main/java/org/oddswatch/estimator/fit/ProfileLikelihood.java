package org.oddswatch.estimator.fit;

import org.apache.commons.math3.analysis.UnivariateFunction;
import org.apache.commons.math3.analysis.solvers.BrentSolver;
import org.apache.commons.math3.exception.MathIllegalStateException;
import org.apache.commons.math3.special.Erf;

/**
 * Profile-likelihood confidence interval of one coefficient (Venzon &amp; Moolgavkar 1988): the set
 * of values c with {@code 2 [l(beta_hat) - max_{beta: beta_j = c} l(beta)] <= chi2_1(level)}. For
 * Firth fits the penalized log-likelihood is profiled, the penalty always taken from the full
 * model's information matrix (Heinze &amp; Schemper 2002, as in {@code logistf}).
 *
 * <p>Each bound is bracketed by stepping out from the estimate in doubling multiples of its
 * standard error, then located by Brent's method (Commons Math) to 1e-8 absolute. Every constrained
 * fit starts from the previous one, in a fixed sequence, so the result is deterministic. A bound is
 * NaN when the profile never falls by the required amount within 64 standard errors (or 100 units),
 * as happens when the likelihood is flat on that side, or when a constrained fit does not converge.
 */
public final class ProfileLikelihood {

    private static final double ACCURACY = 1e-8;
    private static final int MAX_EVALUATIONS = 200;

    private ProfileLikelihood() {
    }

    /** {@code chi2_1} quantile at {@code level}: {@code z^2} with {@code z = sqrt(2) erfinv(level)}. */
    public static double chiSquareOneQuantile(double level) {
        double z = Math.sqrt(2) * Erf.erfInv(level);
        return z * z;
    }

    /**
     * @param problem a full-rank problem (aliased columns already removed)
     * @param fit its converged fit (Newton or Firth, which decides what is profiled)
     * @param j the column
     * @return {lower, upper}, either NaN when not found
     */
    public static double[] interval(FitProblem problem, FitResult fit, int j, double level, FitControl control) {
        double half = chiSquareOneQuantile(level) / 2;
        Profile profile = new Profile(problem, fit, j, control);
        double estimate = fit.coefficients()[j];
        double se = fit.standardError(j);
        double unit = Double.isFinite(se) && se > 0 ? se : 1;
        return new double[] {bound(profile, estimate, -unit, half), bound(profile, estimate, unit, half)};
    }

    private static double bound(Profile profile, double estimate, double unit, double half) {
        profile.reset();
        UnivariateFunction excess = c -> profile.drop(c) - half;
        double inner = estimate;
        for (int k = 0; k <= 6; k++) {
            double outer = estimate + unit * (1 << k);
            if (Math.abs(outer - estimate) > 100) {
                return Double.NaN;
            }
            double value = excess.value(outer);
            if (Double.isNaN(value)) {
                return Double.NaN;
            }
            if (value > 0) {
                try {
                    double lo = Math.min(inner, outer);
                    double hi = Math.max(inner, outer);
                    double root = new BrentSolver(ACCURACY).solve(MAX_EVALUATIONS, excess, lo, hi);
                    return profile.failed ? Double.NaN : root;
                } catch (MathIllegalStateException | IllegalArgumentException e) {
                    return Double.NaN;
                }
            }
            inner = outer;
        }
        return Double.NaN;
    }

    /** The profile objective of column j, fitted from the last solution found. */
    private static final class Profile {
        private final FitProblem problem;
        private final FitResult fit;
        private final int j;
        private final FitControl control;
        private final boolean penalized;
        private final boolean[] fixed;
        private double[] start;
        boolean failed;

        Profile(FitProblem problem, FitResult fit, int j, FitControl control) {
            this.problem = problem;
            this.fit = fit;
            this.j = j;
            this.control = control;
            this.penalized = fit.method() == FitMethod.FIRTH;
            this.fixed = new boolean[problem.columns()];
            this.fixed[j] = true;
        }

        void reset() {
            start = fit.coefficients().clone();
            failed = false;
        }

        /** {@code objective(beta_hat) - max objective with beta_j = c}, NaN when the constrained fit fails. */
        double drop(double c) {
            double[] s = start.clone();
            s[j] = c;
            FitResult constrained = FitDriver.fitFullRank(problem, s, fixed, control, penalized);
            if (!constrained.converged()) {
                failed = true;
                return Double.NaN;
            }
            start = constrained.coefficients();
            return fit.objective() - constrained.objective();
        }
    }
}
