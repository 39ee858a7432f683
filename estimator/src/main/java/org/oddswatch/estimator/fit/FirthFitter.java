package org.oddswatch.estimator.fit;

/**
 * Firth's (1993) bias-reduced logistic regression: maximises the penalized log-likelihood
 * {@code l*(beta) = l(beta) + 0.5 log det I(beta)}. The modified score is
 * {@code U*_j = sum_i x_ij (y_i - n_i mu_i + h_i (1/2 - mu_i))} with hat values
 * {@code h_i = w_i x_i' I^-1 x_i}, {@code w_i = n_i mu_i (1 - mu_i)}; the step is {@code I^-1 U*}
 * with step-halving on {@code l*}. Estimates exist (are finite) also under separation. The
 * covariance reported is {@code I(beta*)^-1}, as in {@code logistf} and {@code brglm2}.
 */
public final class FirthFitter {

    private FirthFitter() {
    }

    /** Same contract as {@link NewtonFitter#fit}, with {@link FitResult#method()} {@code FIRTH}. */
    public static FitResult fit(FitProblem problem, double[] start, FitControl control) {
        return FitDriver.fit(problem, start, control, true);
    }
}
