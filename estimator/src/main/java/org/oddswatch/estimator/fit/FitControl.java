package org.oddswatch.estimator.fit;

/**
 * Iteration settings of the Newton and Firth fitters.
 *
 * <p>Convergence: the Newton decrement {@code lambda^2 = U' I^-1 U} over the free coordinates (U the
 * score, Firth-modified for Firth fits; I the information) at most {@code tolerance}, or at the rounding
 * floor of the objective (see {@code NewtonEngine}). {@code lambda} is the length of the next Newton
 * step in standard-error units, so the default {@code 1e-12} puts the iterate within {@code 1e-6}
 * standard errors of the maximum before the polishing step (and about {@code 1e-12} after it), at any
 * number of events and any scaling of the columns.
 *
 * <p>A divergence stop (off by default) ends the iteration, not converged, as soon as some linear
 * predictor exceeds {@code divergenceEta} in absolute value while the last step lowered the decrement by
 * less than a factor 10 (a fit in the quadratic region of a finite maximum lowers it by far more, so a
 * large |eta| from an uncentred column does not stop it): the symptom of separation, where Newton
 * steps walk off to infinity one unit at a time. The window fit uses it for its first attempt only, so a
 * separated window does not spend the whole cap twice before the separation check; when the check
 * finds no separation the fit is rerun without it.
 *
 * @param maxIterations iteration cap (accepted Newton steps), at least 1
 * @param tolerance bound on the Newton decrement {@code lambda^2}, default 1e-12
 * @param divergenceEta |eta| beyond which the iteration stops as diverging; infinity (the default) for never
 */
public record FitControl(int maxIterations, double tolerance, double divergenceEta) {

    public FitControl {
        if (maxIterations < 1) {
            throw new IllegalArgumentException("maxIterations must be at least 1");
        }
        if (!(tolerance > 0)) {
            throw new IllegalArgumentException("tolerance must be positive");
        }
        if (!(divergenceEta > 0)) {
            throw new IllegalArgumentException("divergenceEta must be positive");
        }
    }

    /** 25 iterations, decrement tolerance 1e-12. */
    public static FitControl defaults() {
        return new FitControl(25, 1e-12, Double.POSITIVE_INFINITY);
    }

    public FitControl withMaxIterations(int value) {
        return new FitControl(value, tolerance, divergenceEta);
    }

    /** The same settings, stopping once some |eta| exceeds {@code eta}. */
    public FitControl withDivergenceStop(double eta) {
        return new FitControl(maxIterations, tolerance, eta);
    }

    /**
     * For constrained fits that only report their objective (profile bounds, LR tests): the decrement
     * tolerance loosened to at most {@code 1e-10}, which leaves the objective within {@code 5e-11} of its
     * constrained maximum ({@code lambda^2 / 2}), far below the profile's root tolerance of 1e-9.
     */
    public FitControl forObjectiveOnly() {
        return new FitControl(maxIterations, Math.max(tolerance, 1e-10), divergenceEta);
    }
}
