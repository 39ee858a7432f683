package org.oddswatch.estimator.fit;

import java.util.Locale;

/**
 * Why a Newton or Firth iteration stopped, with the Newton decrement {@code lambda^2 = U' I^-1 U}
 * (over the free coordinates) at the point where it stopped.
 *
 * @param reason the stopping rule that ended the iteration
 * @param decrement {@code lambda^2} at the last iterate, NaN when it could not be computed (singular
 *     information or no finite start)
 */
public record FitStop(Reason reason, double decrement) {

    /** The stopping rules of {@code NewtonEngine}. */
    public enum Reason {
        /** Converged: {@code lambda^2} at or below the tolerance. */
        DECREMENT_BELOW_TOLERANCE(true),
        /**
         * Converged: the predicted gain {@code lambda^2 / 2} was below the rounding of the objective and a
         * full Newton step no longer lowered {@code lambda^2}, which is then rounding noise itself.
         */
        ROUNDING_FLOOR(true),
        /** Not converged: no step length improved the objective beyond rounding while {@code lambda^2} was larger. */
        NO_IMPROVEMENT(false),
        /** Not converged: some linear predictor passed the divergence stop ({@link FitControl#divergenceEta()}). */
        DIVERGING(false),
        /** Not converged: the iteration cap was reached. */
        ITERATION_CAP(false),
        /** Not converged: the information matrix of the free coordinates was not positive definite. */
        SINGULAR_INFORMATION(false),
        /** Not converged: the objective was not finite at the start. */
        NON_FINITE_START(false);

        private final boolean converged;

        Reason(boolean converged) {
            this.converged = converged;
        }

        public boolean converged() {
            return converged;
        }
    }

    /** Whether the rule is a convergence. */
    public boolean converged() {
        return reason.converged();
    }

    /**
     * A sentence for users, e.g. "stopped after 4 iterations: no step improved the log-likelihood
     * beyond rounding while the Newton decrement was 3.0e-03".
     *
     * @param iterations accepted steps
     * @param penalized whether the objective is Firth's penalized log-likelihood
     */
    public String describe(int iterations, boolean penalized) {
        String objective = penalized ? "penalized log-likelihood" : "log-likelihood";
        String count = iterations + (iterations == 1 ? " iteration" : " iterations");
        String after = "stopped after " + count + ": ";
        String lambda = Double.isFinite(decrement) ? String.format(Locale.ROOT, "%.1e", decrement) : "not computable";
        return switch (reason) {
            case DECREMENT_BELOW_TOLERANCE -> "converged after " + count + " (Newton decrement "
                    + lambda + ")";
            case ROUNDING_FLOOR -> "converged after " + count + " at the rounding level of the "
                    + objective + " (Newton decrement " + lambda + ")";
            case NO_IMPROVEMENT -> after + "no step improved the " + objective
                    + " beyond rounding while the Newton decrement was " + lambda;
            case DIVERGING -> after + "the estimates were diverging (fitted probabilities within 3e-7 of 0 or 1)";
            case ITERATION_CAP -> after + "the iteration cap was reached with the Newton decrement at " + lambda;
            case SINGULAR_INFORMATION -> after + "the information matrix became singular (Newton decrement "
                    + lambda + ")";
            case NON_FINITE_START -> "stopped before the first iteration: the " + objective
                    + " is not finite at the start values";
        };
    }
}
