package org.oddswatch.estimator.fit;

import org.apache.commons.math3.special.Erf;

/**
 * Profile-likelihood confidence interval of one coefficient (Venzon &amp; Moolgavkar 1988): the set
 * of values c with {@code 2 [l(beta_hat) - max_{beta: beta_j = c} l(beta)] <= chi2_1(level)}. For
 * Firth fits the penalized log-likelihood is profiled, the penalty always taken from the full
 * model's information matrix (Heinze &amp; Schemper 2002, as in {@code logistf}).
 *
 * <p>Each bound solves {@code f(c) = drop(c) - chi2_1(level)/2 = 0}, where {@code drop(c)} is the fall
 * of the profile from its maximum. By the envelope theorem {@code drop'(c) = -U_j(beta~(c))}, the
 * score of coefficient j at the constrained maximum, so a safeguarded Newton iteration applies:
 * start at the Wald bound, step {@code c - f/f'}, keep a bracket once the sign of f changes and
 * bisect when a Newton step would leave it; before bracketing, steps go outward and at most double
 * the distance from the estimate. Stop when {@code |f| < 1e-9} or the step is below
 * {@code 1e-10 (1 + |c|)}. Each constrained fit starts from the previous one, in a fixed sequence,
 * so the result is deterministic; typically 3 to 5 constrained fits per bound.
 *
 * <p>A bound is NaN when the profile does not fall far enough within 100 units of the estimate (the
 * likelihood is flat on that side, as under separation with plain maximum likelihood), when a
 * constrained fit does not converge, or after 60 evaluations.
 */
public final class ProfileLikelihood {

    private static final double F_TOLERANCE = 1e-9;
    private static final double STEP_TOLERANCE = 1e-10;
    private static final double LIMIT = 100;
    private static final int MAX_EVALUATIONS = 60;

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
        double q = chiSquareOneQuantile(level);
        Profile profile = new Profile(problem, fit, j, control);
        double se = fit.standardError(j);
        double wald = Math.sqrt(q) * (Double.isFinite(se) && se > 0 ? se : 1);
        return new double[] {bound(profile, -1, wald, q / 2), bound(profile, 1, wald, q / 2)};
    }

    private static double bound(Profile profile, int side, double wald, double half) {
        profile.reset();
        double estimate = profile.estimate();
        double inner = estimate;
        double outer = Double.NaN;
        double c = estimate + side * wald;
        for (int k = 0; k < MAX_EVALUATIONS; k++) {
            if (Math.abs(c - estimate) > LIMIT) {
                return Double.NaN;
            }
            double f = profile.drop(c) - half;
            if (Double.isNaN(f)) {
                return Double.NaN;
            }
            if (Math.abs(f) < F_TOLERANCE) {
                return c;
            }
            double slope = profile.slope();
            if (f < 0) {
                inner = c;
            } else {
                outer = c;
            }
            double next = c - f / slope;
            if (!Double.isNaN(outer)) {
                double lo = Math.min(inner, outer);
                double hi = Math.max(inner, outer);
                if (!(next > lo && next < hi)) {
                    next = 0.5 * (inner + outer);
                }
            } else {
                double reach = 2 * Math.abs(c - estimate);
                if (!(side * (next - c) > 0) || Math.abs(next - estimate) > reach) {
                    next = estimate + side * reach;
                }
            }
            if (Math.abs(next - c) < STEP_TOLERANCE * (1 + Math.abs(c))) {
                return next;
            }
            c = next;
        }
        return Double.NaN;
    }

    /** The profile of column j, each constrained fit started from the last solution found. */
    private static final class Profile {
        private final FitProblem problem;
        private final FitResult fit;
        private final int j;
        private final FitControl control;
        private final boolean penalized;
        private final boolean[] fixed;
        private final IndicatorGroups groups;
        private double[] start;
        private double slope;

        Profile(FitProblem problem, FitResult fit, int j, FitControl control) {
            this.problem = problem;
            this.fit = fit;
            this.j = j;
            this.control = control.forObjectiveOnly();
            this.penalized = fit.method() == FitMethod.FIRTH;
            this.fixed = new boolean[problem.columns()];
            this.fixed[j] = true;
            this.groups = IndicatorGroups.of(problem);
        }

        double estimate() {
            return fit.coefficients()[j];
        }

        void reset() {
            start = fit.coefficients().clone();
        }

        /**
         * {@code objective(beta_hat) - max objective with beta_j = c}, NaN when the constrained fit fails.
         * The start moves the other coefficients along the profile trace of the quadratic approximation,
         * {@code beta_k + (c - beta_j) V_kj / V_jj} (V the covariance at the estimate), which is where the
         * constrained maximum lies when the log-likelihood is quadratic; so a constrained fit usually needs
         * one or two steps.
         */
        double drop(double c) {
            double[] s = start.clone();
            double[][] v = fit.covariance();
            if (v != null && v[j][j] > 0) {
                double shift = c - s[j];
                for (int k = 0; k < s.length; k++) {
                    s[k] += shift * v[k][j] / v[j][j];
                }
            }
            s[j] = c;
            FitResult constrained = FitDriver.fitFullRank(problem, groups, s, fixed, control, penalized);
            if (!constrained.converged()) {
                return Double.NaN;
            }
            start = constrained.coefficients();
            slope = -constrained.score()[j];
            return fit.objective() - constrained.objective();
        }

        /** {@code drop'(c)} at the last evaluated c. */
        double slope() {
            return slope;
        }
    }
}
